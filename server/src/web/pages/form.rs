//! Reading `multipart/form-data` bodies with bounds: each file field has its
//! own byte limit (a too-large file is a 413 that names the limit), text
//! fields are at most [`MAX_TEXT_FIELD_BYTES`], and a form has at most
//! [`MAX_FIELDS`] fields. Nothing is written anywhere while reading.

use super::common::{MAX_TEXT_FIELD_BYTES, PageError};
use actix_multipart::{Field, Multipart};
use futures_util::StreamExt;
use std::collections::HashMap;

/// Most fields in one form (our choice: the largest form has 12).
pub const MAX_FIELDS: usize = 32;

/// A file field as received.
#[derive(Debug, Clone, Default)]
pub struct FilePart {
    /// The file name the browser sent (may be empty).
    pub file_name: String,
    pub bytes: Vec<u8>,
}

/// A file field the form expects: its name, its byte limit and what it is
/// called on the page.
#[derive(Debug, Clone, Copy)]
pub struct FileSpec {
    pub field: &'static str,
    pub limit: usize,
    pub label: &'static str,
}

/// The fields of one form.
#[derive(Debug, Default)]
pub struct Parts {
    pub texts: HashMap<String, String>,
    pub files: HashMap<String, FilePart>,
}

impl Parts {
    /// A text field, trimmed; `None` when absent or blank.
    pub fn text(&self, name: &str) -> Option<String> {
        self.texts
            .get(name)
            .map(|s| s.trim().to_string())
            .filter(|s| !s.is_empty())
    }

    /// A checkbox: present with any value but "false"/"off".
    pub fn checked(&self, name: &str) -> bool {
        self.texts
            .get(name)
            .is_some_and(|v| !matches!(v.trim(), "false" | "off" | "0"))
    }
}

/// "64 MiB", "512 KiB", "100 bytes".
pub fn human_bytes(n: u64) -> String {
    const KIB: u64 = 1024;
    const MIB: u64 = 1024 * KIB;
    const GIB: u64 = 1024 * MIB;
    if n >= GIB && n.is_multiple_of(GIB) {
        format!("{} GiB", n / GIB)
    } else if n >= MIB && n.is_multiple_of(MIB) {
        format!("{} MiB", n / MIB)
    } else if n >= KIB && n.is_multiple_of(KIB) {
        format!("{} KiB", n / KIB)
    } else {
        format!("{n} bytes")
    }
}

fn multipart_error(e: actix_multipart::MultipartError) -> PageError {
    PageError::bad_request(format!(
        "the form could not be read ({e}); send it from the page, as multipart/form-data"
    ))
}

/// The next field of the form, or `None` at the end.
pub async fn next_field(mp: &mut Multipart) -> Result<Option<Field>, PageError> {
    match mp.next().await {
        None => Ok(None),
        Some(Ok(f)) => Ok(Some(f)),
        Some(Err(e)) => Err(multipart_error(e)),
    }
}

/// The field's name (empty when it has none).
pub fn field_name(f: &Field) -> String {
    f.name().unwrap_or_default().to_string()
}

/// The file name the browser sent for the field (empty when none).
pub fn file_name(f: &Field) -> String {
    f.content_disposition()
        .and_then(|cd| cd.get_filename())
        .unwrap_or_default()
        .to_string()
}

/// The next chunk of a field's bytes.
pub async fn next_chunk(f: &mut Field) -> Result<Option<actix_web::web::Bytes>, PageError> {
    match f.next().await {
        None => Ok(None),
        Some(Ok(b)) => Ok(Some(b)),
        Some(Err(e)) => Err(multipart_error(e)),
    }
}

/// All of a field's bytes, at most `limit` of them.
pub async fn read_bounded(
    f: &mut Field,
    limit: usize,
    too_large: &str,
) -> Result<Vec<u8>, PageError> {
    let mut out = Vec::new();
    while let Some(chunk) = next_chunk(f).await? {
        if out.len() + chunk.len() > limit {
            return Err(PageError::too_large(too_large.to_string()));
        }
        out.extend_from_slice(&chunk);
    }
    Ok(out)
}

/// Read a whole form: the file fields of `files` with their limits, every
/// other field as bounded text.
pub async fn read_parts(mut mp: Multipart, files: &[FileSpec]) -> Result<Parts, PageError> {
    let mut parts = Parts::default();
    let mut count = 0;
    while let Some(mut f) = next_field(&mut mp).await? {
        count += 1;
        if count > MAX_FIELDS {
            return Err(PageError::bad_request(format!(
                "the form has more than {MAX_FIELDS} fields"
            )));
        }
        let name = field_name(&f);
        if let Some(spec) = files.iter().find(|s| s.field == name) {
            let file_name = file_name(&f);
            let msg = format!(
                "The {} is larger than the limit of {}; nothing was changed.",
                spec.label,
                human_bytes(spec.limit as u64)
            );
            let bytes = read_bounded(&mut f, spec.limit, &msg).await?;
            parts.files.insert(name, FilePart { file_name, bytes });
        } else {
            let msg = format!(
                "Field '{name}' is longer than {}.",
                human_bytes(MAX_TEXT_FIELD_BYTES as u64)
            );
            let bytes = read_bounded(&mut f, MAX_TEXT_FIELD_BYTES, &msg).await?;
            let text = String::from_utf8(bytes)
                .map_err(|_| PageError::bad_request(format!("field '{name}' is not UTF-8 text")))?;
            parts.texts.insert(name, text);
        }
    }
    Ok(parts)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_are_said_in_binary_units() {
        // IEC 80000-13 binary prefixes (common practice for upload limits).
        assert_eq!(human_bytes(64 * 1024 * 1024), "64 MiB");
        assert_eq!(human_bytes(1 << 30), "1 GiB");
        assert_eq!(human_bytes(8 * 1024), "8 KiB");
        assert_eq!(human_bytes(1000), "1000 bytes");
    }

    #[test]
    fn checkboxes_and_blank_texts() {
        let mut p = Parts::default();
        p.texts.insert("a".into(), "on".into());
        p.texts.insert("b".into(), "off".into());
        p.texts.insert("c".into(), "  ".into());
        assert!(p.checked("a"));
        assert!(!p.checked("b"));
        assert!(!p.checked("zzz"));
        assert_eq!(p.text("c"), None);
        assert_eq!(p.text("a").as_deref(), Some("on"));
    }
}
