//! CSV alert files: a header row, comma or semicolon separated.

use super::{
    CONFIDENCE_NAMES, DATE_NAMES, LAT_NAMES, LON_NAMES, Parsed, ReadOptions, RowError, build_row,
};

fn file_error(file: &str, line: usize, field: &str, message: String) -> RowError {
    RowError {
        file: file.into(),
        line,
        unit: "line",
        field: field.into(),
        message,
    }
}

/// Find a column by the name the user gave, or by the usual names.
fn find_column(
    headers: &[String],
    given: Option<&str>,
    usual: &[&str],
    what: &str,
) -> Result<usize, String> {
    let norm = |s: &str| s.trim().trim_start_matches('\u{feff}').to_ascii_lowercase();
    if let Some(g) = given {
        return headers
            .iter()
            .position(|h| norm(h) == norm(g))
            .ok_or_else(|| format!("the {what} column '{g}' is not in the header"));
    }
    headers
        .iter()
        .position(|h| usual.contains(&norm(h).as_str()))
        .ok_or_else(|| {
            format!(
                "no {what} column: expected one of {} (or name it with a flag)",
                usual.join(", ")
            )
        })
}

pub fn parse(file: &str, bytes: &[u8], opts: &ReadOptions) -> Parsed {
    let mut out = Parsed {
        rows_read: 0,
        alerts: Vec::new(),
        errors: Vec::new(),
    };
    let Ok(text) = std::str::from_utf8(bytes) else {
        out.errors.push(file_error(
            file,
            0,
            "(file)",
            "file is not UTF-8 text".into(),
        ));
        return out;
    };
    let mut reader = csv::ReaderBuilder::new()
        .delimiter(delimiter_of(text))
        .flexible(true)
        .from_reader(text.as_bytes());
    let Some(headers) = read_headers(&mut reader) else {
        out.errors.push(file_error(
            file,
            1,
            "(header)",
            "the file has no header row".into(),
        ));
        return out;
    };
    let idx = match find_columns(&headers, opts) {
        Ok(idx) => idx,
        Err(messages) => {
            out.errors.extend(
                messages
                    .into_iter()
                    .map(|m| file_error(file, 1, "(header)", m)),
            );
            return out;
        }
    };
    let columns = Columns {
        idx,
        names: idx.map(|i| headers[i].trim().to_string()),
        width: headers.len(),
    };
    let lines = LineIndex::new(text);
    for rec in reader.records() {
        read_record(file, rec, &columns, &lines, opts, &mut out);
    }
    out
}

/// Semicolons when the first line has more of them than commas.
fn delimiter_of(text: &str) -> u8 {
    let first_line = text.lines().next().unwrap_or("");
    if first_line.matches(';').count() > first_line.matches(',').count() {
        b';'
    } else {
        b','
    }
}

/// The header row, or `None` when the file has none.
fn read_headers(reader: &mut csv::Reader<&[u8]>) -> Option<Vec<String>> {
    match reader.headers() {
        Ok(h) if !(h.is_empty() || h.len() == 1 && h[0].trim().is_empty()) => {
            Some(h.iter().map(str::to_string).collect())
        }
        _ => None,
    }
}

/// The positions of longitude, latitude, date and confidence, or every
/// column that could not be found.
fn find_columns(headers: &[String], opts: &ReadOptions) -> Result<[usize; 4], Vec<String>> {
    let cols = [
        find_column(headers, opts.lon_column.as_deref(), LON_NAMES, "longitude"),
        find_column(headers, opts.lat_column.as_deref(), LAT_NAMES, "latitude"),
        find_column(headers, opts.date_column.as_deref(), DATE_NAMES, "date"),
        find_column(
            headers,
            opts.confidence_column.as_deref(),
            CONFIDENCE_NAMES,
            "confidence",
        ),
    ];
    let mut idx = [0usize; 4];
    let mut errors = Vec::new();
    for (i, c) in cols.into_iter().enumerate() {
        match c {
            Ok(v) => idx[i] = v,
            Err(m) => errors.push(m),
        }
    }
    if errors.is_empty() {
        Ok(idx)
    } else {
        Err(errors)
    }
}

/// The four columns read from every record: positions, header names, and
/// how many columns the header has.
struct Columns {
    idx: [usize; 4],
    names: [String; 4],
    width: usize,
}

/// Line numbers from byte offsets: the csv crate does not count the blank
/// lines it skips.
struct LineIndex<'a> {
    text: &'a str,
    newlines: Vec<usize>,
}

impl<'a> LineIndex<'a> {
    fn new(text: &'a str) -> Self {
        let newlines = text.match_indices('\n').map(|(i, _)| i).collect();
        Self { text, newlines }
    }

    fn line_at(&self, byte: u64) -> usize {
        let mut b = byte as usize;
        while matches!(self.text.as_bytes().get(b), Some(b'\n' | b'\r')) {
            b += 1;
        }
        self.newlines.partition_point(|&nl| nl < b) + 1
    }
}

/// One record: an alert, an error with its line, or nothing for a blank row.
fn read_record(
    file: &str,
    rec: csv::Result<csv::StringRecord>,
    columns: &Columns,
    lines: &LineIndex,
    opts: &ReadOptions,
    out: &mut Parsed,
) {
    let rec = match rec {
        Ok(r) => r,
        Err(e) => {
            let line = e.position().map(|p| lines.line_at(p.byte())).unwrap_or(0);
            out.rows_read += 1;
            out.errors.push(file_error(
                file,
                line,
                "(row)",
                format!("unreadable CSV: {e}"),
            ));
            return;
        }
    };
    if rec.iter().all(|c| c.trim().is_empty()) {
        return;
    }
    out.rows_read += 1;
    let line = rec.position().map(|p| lines.line_at(p.byte())).unwrap_or(0);
    let idx = columns.idx;
    let cell = |i: usize| rec.get(i);
    let raw = match (cell(idx[0]), cell(idx[1]), cell(idx[2]), cell(idx[3])) {
        (Some(a), Some(b), Some(c), Some(d)) => [a, b, c, d],
        _ => {
            out.errors.push(file_error(
                file,
                line,
                "(row)",
                format!("expected {} columns, found {}", columns.width, rec.len()),
            ));
            return;
        }
    };
    let fields = columns.names.each_ref().map(String::as_str);
    match build_row(raw, opts, line, fields) {
        Ok(a) => out.alerts.push(a),
        Err((field, message)) => out.errors.push(file_error(file, line, &field, message)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::domain::{Confidence, ConfidenceMap};

    #[test]
    fn reads_usual_names_and_semicolons() {
        let text = "LAT;LON;date;confidence\n-3.1;-60.2;2026-02-01;confirmed\n\n-3.2;-60.3;2026-02-02;tentative\n";
        let p = parse("a.csv", text.as_bytes(), &ReadOptions::default());
        assert!(p.errors.is_empty(), "{:?}", p.errors);
        assert_eq!(p.rows_read, 2);
        assert_eq!(p.alerts[0].at.lon(), -60.2);
        assert_eq!(p.alerts[1].line, 4);
        assert_eq!(p.alerts[1].confidence, Confidence::Tentative);
    }

    #[test]
    fn errors_name_line_and_field() {
        let text = "longitude,latitude,detected_on,confidence\n-60,-3,2026-01-01,confirmed\n-60,95,2026-01-01,confirmed\nabc,-3,2026-01-01,confirmed\n-60,-3,2026-13-01,confirmed\n-60,-3,2026-01-01,7\n";
        let p = parse("bad.csv", text.as_bytes(), &ReadOptions::default());
        let got: Vec<(usize, &str)> = p
            .errors
            .iter()
            .map(|e| (e.line, e.field.as_str()))
            .collect();
        assert_eq!(
            got,
            vec![
                (3, "latitude"),
                (4, "longitude"),
                (5, "detected_on"),
                (6, "confidence")
            ]
        );
        assert_eq!(p.alerts.len(), 1);
        assert!(
            p.errors[0]
                .to_string()
                .starts_with("bad.csv: line 3: field 'latitude'")
        );
    }

    #[test]
    fn flags_name_columns_and_map_numbers() {
        let text = "px,py,when,score\n10,20,2026-01-01,80\n";
        let opts = ReadOptions {
            lon_column: Some("px".into()),
            lat_column: Some("py".into()),
            date_column: Some("when".into()),
            confidence_column: Some("score".into()),
            confidence: ConfidenceMap {
                numeric_threshold: Some(50.0),
            },
            not_after: None,
        };
        let p = parse("f.csv", text.as_bytes(), &opts);
        assert!(p.errors.is_empty(), "{:?}", p.errors);
        assert_eq!(p.alerts[0].confidence, Confidence::Confirmed);
        let missing = parse("f.csv", text.as_bytes(), &ReadOptions::default());
        assert_eq!(missing.errors.len(), 4);
        assert!(missing.errors[0].message.contains("longitude"));
    }
}
