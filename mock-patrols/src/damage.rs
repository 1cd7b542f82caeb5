//! Seeded damage to valid inputs, for the robustness tests of every parser
//! of untrusted input (bundles, returns, photos, alert and zone files, the
//! upload endpoints).
//!
//! Each function takes valid bytes and a seed and returns bytes damaged the
//! way a bad link, a bad disk or a hostile sender would damage them: flipped
//! bits, cut files, inserted and duplicated spans, and, for JSON and CSV, the
//! structured changes a byte flip rarely finds (values swapped between
//! fields, numbers past `f64` such as `1e400`, sizes of `u64::MAX`, nesting
//! thousands deep, duplicated keys, cells and lines). The same seed always
//! gives the same damage, so a failing case is reproduced from its seed.

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde_json::Value;

/// Depth of the deeply nested JSON values inserted (past serde_json's
/// default recursion limit of 128 and any stack a recursive reader should
/// spend on one value).
pub const DEEP_NESTING: usize = 20_000;

/// Length of the oversized strings and cells inserted, bytes.
pub const LONG_TEXT: usize = 200_000;

/// Short byte sequences that mean something to one of the formats read:
/// ZIP record signatures, JPEG markers, JSON and CSV punctuation, numbers
/// out of range.
const TOKENS: &[&[u8]] = &[
    b"PK\x03\x04",
    b"PK\x01\x02",
    b"PK\x05\x06",
    b"PK\x06\x06",
    b"\xff\xd8",
    b"\xff\xc0",
    b"\xff\xc2",
    b"\xff\xda",
    b"\xff\xe1",
    b"\xff\xd9",
    b"\xff\xff\xff\xff",
    b"\x00\x00\x00\x00",
    b"Exif\x00\x00",
    b"MM\x00\x2a",
    b"II\x2a\x00",
    b"\"",
    b",",
    b"\n",
    b"\r\n",
    b"{",
    b"}",
    b"[",
    b"]",
    b":",
    b"\\",
    b"1e400",
    b"-1e400",
    b"NaN",
    b"18446744073709551616",
    b"\xc3\x28",
    b"\xef\xbb\xbf",
];

/// Literal JSON values put in place of a value of a valid document.
const JSON_LITERALS: &[&str] = &[
    "1e400",
    "-1e400",
    "1e308",
    "-0",
    "0",
    "-1",
    "0.5",
    "18446744073709551615",
    "18446744073709551616",
    "-9223372036854775809",
    "4294967296",
    "null",
    "true",
    "\"\"",
    "\"NaN\"",
    "\"-1e400\"",
    "\"9999-99-99\"",
    "\"2026-02-30\"",
    "\"../../etc/passwd\"",
    "[]",
    "{}",
    "[null]",
    "{\"type\":\"Feature\"}",
    "[[1e400,1e400],[0,0]]",
];

/// Cells put in place of a cell of a valid CSV file.
const CSV_CELLS: &[&str] = &[
    "1e400",
    "-1e400",
    "NaN",
    "inf",
    "-inf",
    "1e308",
    "18446744073709551616",
    "-0",
    "",
    " ",
    "\"",
    "\"\"\"",
    "\"a,b\"",
    "2026-02-30",
    "9999-99-99",
    "0000-00-00",
    "2026-13-01",
    "-90.000000001",
    "180.0000001",
    "confirmed;tentative",
    "\u{feff}lon",
    "\u{0}",
];

/// Cases a robustness test runs: `default` (the bounded count CI runs), or
/// the number in the environment variable `GROUNDPROOF_ROBUST_CASES` for a
/// longer search on a contributor's machine.
pub fn cases(default: u32) -> u32 {
    std::env::var("GROUNDPROOF_ROBUST_CASES")
        .ok()
        .and_then(|v| v.trim().parse().ok())
        .unwrap_or(default)
}

fn rng(seed: u64) -> ChaCha8Rng {
    ChaCha8Rng::seed_from_u64(seed)
}

fn at(rng: &mut ChaCha8Rng, len: usize) -> usize {
    rng.random_range(0..=len)
}

/// One to three byte-level changes: a flipped bit or byte, a cut, an
/// insertion (random bytes or a format token), a duplicated span, a removed
/// span, or an overwrite with a token.
pub fn damage_bytes(valid: &[u8], seed: u64) -> Vec<u8> {
    let mut r = rng(seed);
    let mut b = valid.to_vec();
    for _ in 0..r.random_range(1..=3u32) {
        one_byte_change(&mut r, &mut b);
    }
    b
}

fn one_byte_change(r: &mut ChaCha8Rng, b: &mut Vec<u8>) {
    let len = b.len();
    match r.random_range(0..7u32) {
        0 if len > 0 => {
            let i = r.random_range(0..len);
            b[i] ^= 1 << r.random_range(0..8u32);
        }
        1 if len > 0 => {
            let i = r.random_range(0..len);
            b[i] = r.random();
        }
        2 => b.truncate(at(r, len)),
        3 => {
            let i = at(r, len);
            let n = r.random_range(1..=64usize);
            let bytes: Vec<u8> = (0..n).map(|_| r.random()).collect();
            b.splice(i..i, bytes);
        }
        4 => {
            let i = at(r, len);
            let token = TOKENS[r.random_range(0..TOKENS.len())];
            b.splice(i..i, token.iter().copied());
        }
        5 if len > 0 => {
            let from = r.random_range(0..len);
            let n = r.random_range(1..=(len - from).min(4096));
            let span = b[from..from + n].to_vec();
            let to = at(r, len);
            b.splice(to..to, span);
        }
        6 if len > 0 => {
            let from = r.random_range(0..len);
            let n = r.random_range(1..=(len - from).min(4096));
            b.drain(from..from + n);
        }
        _ => {
            let token = TOKENS[r.random_range(0..TOKENS.len())];
            let i = at(r, len.saturating_sub(token.len()));
            let end = (i + token.len()).min(len);
            b.splice(i..end, token.iter().copied());
        }
    }
}

/// Text that stands for a value until the document is written out; then it
/// is replaced by a literal serde_json cannot hold (`1e400`, deep nesting,
/// a duplicated key).
const MARK: &str = "\u{1}groundproof-damage\u{1}";
/// `MARK` as serde_json writes it.
const MARK_JSON: &str = "\"\\u0001groundproof-damage\\u0001\"";

/// A structured change to a JSON document: one value replaced (by an
/// out-of-range number, a huge size, another type, a long string, a deep
/// nesting), two values swapped, a value removed, a key duplicated, or every
/// number made huge. Input that is not JSON gets [`damage_bytes`].
pub fn damage_json(valid: &[u8], seed: u64) -> Vec<u8> {
    let Ok(mut doc) = serde_json::from_slice::<Value>(valid) else {
        return damage_bytes(valid, seed);
    };
    let mut r = rng(seed);
    let count = count_values(&doc);
    let target = r.random_range(0..count);
    let literal = match r.random_range(0..8u32) {
        0 => {
            // Another value of the document in this one's place.
            let other = nth(&doc, r.random_range(0..count)).clone();
            replace_nth(&mut doc, target, other);
            None
        }
        1 if target > 0 => {
            remove_in(&mut doc, &mut target.clone());
            None
        }
        2 => Some(duplicate_key(nth(&doc, target), &mut r)),
        3 => {
            let huge = ["1e400", "18446744073709551615", "-1e400"][r.random_range(0..3)];
            return every_number(doc, huge).into_bytes();
        }
        4 => Some(deep_nesting(r.random())),
        5 => {
            replace_nth(&mut doc, target, Value::String("x".repeat(LONG_TEXT)));
            None
        }
        _ => Some(JSON_LITERALS[r.random_range(0..JSON_LITERALS.len())].to_string()),
    };
    if let Some(text) = &literal {
        replace_nth(&mut doc, target, Value::String(MARK.into()));
        let written = serde_json::to_string(&doc).unwrap_or_default();
        return written.replacen(MARK_JSON, text, 1).into_bytes();
    }
    serde_json::to_vec(&doc).unwrap_or_default()
}

/// One to three structured changes to a CSV file (a cell replaced by an
/// out-of-range number, a bad date, a stray quote or a long text; a line
/// duplicated, removed or given an extra cell), else [`damage_bytes`].
pub fn damage_csv(valid: &[u8], seed: u64) -> Vec<u8> {
    let Ok(text) = std::str::from_utf8(valid) else {
        return damage_bytes(valid, seed);
    };
    let mut r = rng(seed);
    if r.random_range(0..4u32) == 0 {
        return damage_bytes(valid, r.random());
    }
    let mut lines: Vec<Vec<String>> = text
        .lines()
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect();
    if lines.is_empty() {
        return damage_bytes(valid, seed);
    }
    for _ in 0..r.random_range(1..=3u32) {
        one_csv_change(&mut r, &mut lines);
    }
    let mut out = lines
        .iter()
        .map(|l| l.join(","))
        .collect::<Vec<_>>()
        .join("\n");
    out.push('\n');
    out.into_bytes()
}

fn one_csv_change(r: &mut ChaCha8Rng, lines: &mut Vec<Vec<String>>) {
    if lines.is_empty() {
        lines.push(vec![String::new()]);
    }
    let l = r.random_range(0..lines.len());
    let c = r.random_range(0..lines[l].len().max(1));
    match r.random_range(0..6u32) {
        0 => {
            let line = lines[l].clone();
            lines.insert(r.random_range(0..=lines.len()), line);
        }
        1 if lines.len() > 1 => {
            lines.remove(l);
        }
        2 => lines[l].push(CSV_CELLS[r.random_range(0..CSV_CELLS.len())].into()),
        3 => {
            if let Some(cell) = lines[l].get_mut(c) {
                *cell = "9".repeat(LONG_TEXT);
            }
        }
        _ => {
            if let Some(cell) = lines[l].get_mut(c) {
                *cell = CSV_CELLS[r.random_range(0..CSV_CELLS.len())].into();
            }
        }
    }
}

/// An array (or object) nested [`DEEP_NESTING`] deep.
fn deep_nesting(object: bool) -> String {
    if object {
        "{\"a\":".repeat(DEEP_NESTING) + "1" + &"}".repeat(DEEP_NESTING)
    } else {
        "[".repeat(DEEP_NESTING) + "1" + &"]".repeat(DEEP_NESTING)
    }
}

/// Number of values in the document, itself included.
fn count_values(v: &Value) -> usize {
    1 + match v {
        Value::Array(a) => a.iter().map(count_values).sum(),
        Value::Object(o) => o.values().map(count_values).sum(),
        _ => 0,
    }
}

/// The `n`-th value in pre-order (0 is the document itself, which is also
/// what an `n` past the end gives).
fn nth(v: &Value, n: usize) -> &Value {
    fn find<'a>(v: &'a Value, n: &mut usize) -> Option<&'a Value> {
        if *n == 0 {
            return Some(v);
        }
        *n -= 1;
        match v {
            Value::Array(a) => a.iter().find_map(|c| find(c, n)),
            Value::Object(o) => o.values().find_map(|c| find(c, n)),
            _ => None,
        }
    }
    find(v, &mut n.clone()).unwrap_or(v)
}

/// Puts `new` in place of the `n`-th value in pre-order.
fn replace_nth(v: &mut Value, n: usize, new: Value) {
    fn go(v: &mut Value, n: &mut usize, new: &mut Option<Value>) -> bool {
        if *n == 0 {
            if let Some(x) = new.take() {
                *v = x;
            }
            return true;
        }
        *n -= 1;
        match v {
            Value::Array(a) => a.iter_mut().any(|c| go(c, n, new)),
            Value::Object(o) => o.values_mut().any(|c| go(c, n, new)),
            _ => false,
        }
    }
    go(v, &mut n.clone(), &mut Some(new));
}

/// Removes the value `*n` places after `v` in pre-order (`*n` at least 1)
/// from its array or object.
fn remove_in(v: &mut Value, n: &mut usize) -> bool {
    *n -= 1;
    match v {
        Value::Array(a) => {
            for i in 0..a.len() {
                if *n == 0 {
                    a.remove(i);
                    return true;
                }
                let size = count_values(&a[i]);
                if *n < size {
                    return remove_in(&mut a[i], n);
                }
                *n -= size;
            }
            false
        }
        Value::Object(o) => {
            let keys: Vec<String> = o.keys().cloned().collect();
            for k in keys {
                if *n == 0 {
                    o.remove(&k);
                    return true;
                }
                let size = o.get(&k).map_or(0, count_values);
                if *n < size {
                    return o.get_mut(&k).is_some_and(|c| remove_in(c, n));
                }
                *n -= size;
            }
            false
        }
        _ => false,
    }
}

/// `v` written with its first key again at the end, holding another value
/// (another literal when `v` is not an object).
fn duplicate_key(v: &Value, r: &mut ChaCha8Rng) -> String {
    let other = JSON_LITERALS[r.random_range(0..JSON_LITERALS.len())];
    let Value::Object(o) = v else {
        return other.to_string();
    };
    let Some(key) = o.keys().next() else {
        return "{\"a\":1,\"a\":2}".into();
    };
    let written = serde_json::to_string(v).unwrap_or_else(|_| "{}".into());
    let key = serde_json::to_string(key).unwrap_or_default();
    format!("{},{key}:{other}}}", &written[..written.len() - 1])
}

/// The document with every number written as `huge`.
fn every_number(mut doc: Value, huge: &str) -> String {
    fn mark(v: &mut Value) {
        match v {
            Value::Number(_) => *v = Value::String(MARK.into()),
            Value::Array(a) => a.iter_mut().for_each(mark),
            Value::Object(o) => o.values_mut().for_each(mark),
            _ => {}
        }
    }
    mark(&mut doc);
    serde_json::to_string(&doc)
        .unwrap_or_default()
        .replace(MARK_JSON, huge)
}

#[cfg(test)]
mod tests {
    use super::*;

    const DOC: &[u8] = br#"{"entries":[{"name":"a","size":3},{"name":"b","size":4}],"format":"x"}"#;

    #[test]
    fn the_same_seed_gives_the_same_damage_and_seeds_differ() {
        for seed in 0..50 {
            assert_eq!(damage_bytes(DOC, seed), damage_bytes(DOC, seed));
            assert_eq!(damage_json(DOC, seed), damage_json(DOC, seed));
            assert_eq!(
                damage_csv(b"a,b\n1,2\n", seed),
                damage_csv(b"a,b\n1,2\n", seed)
            );
        }
        let distinct: std::collections::HashSet<Vec<u8>> =
            (0..50).map(|s| damage_json(DOC, s)).collect();
        assert!(distinct.len() > 25, "{}", distinct.len());
    }

    #[test]
    fn json_damage_reaches_each_kind_of_change() {
        let outs: Vec<String> = (0..400)
            .map(|s| String::from_utf8_lossy(&damage_json(DOC, s)).into_owned())
            .collect();
        let any = |f: &dyn Fn(&str) -> bool| outs.iter().any(|o| f(o));
        assert!(any(&|o| o.contains("1e400")), "an out-of-range number");
        assert!(any(&|o| o.contains("18446744073709551615")), "a huge size");
        assert!(any(
            &|o| o.starts_with(&"[".repeat(100)) || o.contains(&"[".repeat(DEEP_NESTING))
        ));
        assert!(
            any(&|o| o.matches("\"name\"").count() == 3),
            "a duplicated key"
        );
        assert!(any(&|o| o.len() > LONG_TEXT), "a long text");
        assert!(
            any(&|o| serde_json::from_str::<Value>(o).is_ok_and(|v| count_values(&v) < 8)),
            "a removed value"
        );
    }

    #[test]
    fn removing_and_replacing_address_values_in_pre_order() {
        let mut v: Value = serde_json::from_slice(DOC).expect("json");
        // 0 doc, 1 entries, 2 {a}, 3 "a", 4 3, 5 {b}, 6 "b", 7 4, 8 "x"
        assert_eq!(count_values(&v), 9);
        assert_eq!(nth(&v, 7), &serde_json::json!(4));
        replace_nth(&mut v, 4, Value::Null);
        assert_eq!(v["entries"][0]["size"], Value::Null);
        assert!(remove_in(&mut v, &mut 5));
        assert_eq!(v["entries"].as_array().map(Vec::len), Some(1));
    }
}
