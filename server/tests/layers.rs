//! The module map, checked: no import circle between modules at any level of
//! either crate, and no import from a lower layer of the server to a higher
//! one. The layers are the table in DEVELOPERS.md ("Module map"); `LAYERS` and
//! `PURE` below are the same table in code.
//!
//! The check reads the source as text: every `crate::…`, `super::…` and
//! `self::…` path outside comments and test modules is an import of the
//! module it names. Run it alone with `cargo test -p groundproof-server --test layers`.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// Top-level server modules, lowest first, each with the modules it may import.
const LAYERS: &[(&str, &[&str])] = &[
    ("domain", &[]),
    ("error", &["domain"]),
    ("platform", &["domain", "error"]),
    ("alerts", &["domain", "error", "platform"]),
    ("planning", &["domain", "error", "platform", "alerts"]),
    ("intake", &["domain", "error", "platform", "alerts"]),
    ("reconcile", &["domain", "error"]),
    (
        "statistics",
        &["domain", "error", "platform", "alerts", "reconcile"],
    ),
    (
        "web",
        &[
            "domain",
            "error",
            "platform",
            "alerts",
            "planning",
            "intake",
            "reconcile",
            "statistics",
        ],
    ),
    (
        "demo",
        &[
            "domain",
            "error",
            "platform",
            "alerts",
            "planning",
            "intake",
            "reconcile",
            "statistics",
            "web",
        ],
    ),
];

/// Pure modules: no storage, files or HTTP. Each may import only the
/// vocabulary, the error type and the modules listed beside it.
const PURE: &[(&str, &[&str])] = &[
    ("alerts::cluster", &["domain", "error"]),
    ("alerts::import", &["domain", "error"]),
    ("planning::route", &["domain", "error", "planning"]),
    ("planning::sample", &["domain", "error", "planning"]),
    ("planning::controls", &["domain", "error", "planning"]),
    ("planning::coords", &["domain", "error"]),
    ("reconcile", &["domain", "error"]),
    ("statistics::estimators", &["domain", "error"]),
    (
        "statistics::figures",
        &["domain", "error", "reconcile", "statistics::estimators"],
    ),
    ("web::charts", &["domain", "error"]),
];

/// Crates whose use marks a module as doing I/O of a kind only one layer may do.
/// (`domain` may also convert its words to SQLite values: see
/// [`beyond_value_conversion`].)
const ONLY_IN: &[(&str, &str)] = &[
    ("rusqlite", "platform::storage"),
    ("postgres", "platform::storage"),
    ("actix_web", "web"),
];

type Module = Vec<String>;

struct Source {
    module: Module,
    file: PathBuf,
    text: String,
}

/// Every `.rs` file under `src` with its module path (`intake/files.rs` is
/// `intake::files`, `intake/mod.rs` is `intake`, `lib.rs` is the root).
fn sources(src: &Path) -> Vec<Source> {
    let mut out = Vec::new();
    let mut stack = vec![src.to_path_buf()];
    while let Some(dir) = stack.pop() {
        for entry in std::fs::read_dir(&dir).expect("read source folder") {
            let path = entry.expect("read folder entry").path();
            if path.is_dir() {
                if path.file_name().is_some_and(|n| n != "bin") {
                    stack.push(path);
                }
                continue;
            }
            if path.extension().is_none_or(|e| e != "rs") {
                continue;
            }
            let rel = path.strip_prefix(src).expect("under src");
            let mut module: Module = rel
                .with_extension("")
                .iter()
                .map(|c| c.to_string_lossy().into_owned())
                .collect();
            if matches!(
                module.last().map(String::as_str),
                Some("mod" | "lib" | "main")
            ) {
                module.pop();
            }
            if is_test_file(&module) {
                continue;
            }
            let text = code_only(&std::fs::read_to_string(&path).expect("read source"));
            out.push(Source {
                module,
                file: path,
                text,
            });
        }
    }
    out
}

fn is_test_file(module: &Module) -> bool {
    module
        .iter()
        .any(|m| m == "tests" || m.ends_with("_tests") || m == "testutil")
}

/// The text without comments and without `#[cfg(test)]` modules (which sit
/// at the end of a file by the project's convention).
fn code_only(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    let mut lines = text.lines().peekable();
    while let Some(line) = lines.next() {
        let trimmed = line.trim_start();
        if trimmed.starts_with("#[cfg(test)]")
            && lines
                .peek()
                .is_some_and(|next| next.trim_start().contains("mod "))
        {
            break;
        }
        let code = match line.find("//") {
            Some(at) if !line[..at].contains('"') => &line[..at],
            _ => line,
        };
        out.push_str(code);
        out.push('\n');
    }
    out
}

/// Every path that starts with `crate`, `super` or `self`, with one level of
/// `{…}` groups expanded: `crate::a::{b, c::d}` gives `crate::a::b` and
/// `crate::a::c::d`.
fn paths(text: &str) -> Vec<Vec<String>> {
    let bytes = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < bytes.len() {
        let at_word_start = i == 0 || !is_ident(bytes[i - 1]) && bytes[i - 1] != b':';
        let head = ["crate::", "super::", "self::"]
            .into_iter()
            .find(|h| bytes[i..].starts_with(h.as_bytes()));
        match head {
            Some(h) if at_word_start => {
                let (mut segs, end) = read_path(text, i);
                if bytes[end..].starts_with(b"::{") {
                    let close = matching_brace(text, end + 2);
                    for item in split_top(&text[end + 3..close]) {
                        let (tail, _) = read_path(item.trim(), 0);
                        let mut full = segs.clone();
                        full.extend(tail);
                        out.push(full);
                    }
                    i = close;
                } else {
                    if segs.len() == 1 && h == "self::" {
                        segs.clear();
                    }
                    out.push(segs);
                    i = end;
                }
            }
            _ => i += 1,
        }
    }
    out.retain(|p| !p.is_empty());
    out
}

fn is_ident(b: u8) -> bool {
    b.is_ascii_alphanumeric() || b == b'_'
}

/// The identifiers of a `a::b::c` path starting at `start`, and where it ends.
fn read_path(text: &str, start: usize) -> (Vec<String>, usize) {
    let bytes = text.as_bytes();
    let mut segs = Vec::new();
    let mut i = start;
    loop {
        let s = i;
        while i < bytes.len() && is_ident(bytes[i]) {
            i += 1;
        }
        if i == s {
            break;
        }
        segs.push(text[s..i].to_string());
        if bytes[i..].starts_with(b"::") && bytes.get(i + 2).is_some_and(|&b| is_ident(b)) {
            i += 2;
        } else {
            break;
        }
    }
    (segs, i)
}

fn matching_brace(text: &str, open: usize) -> usize {
    let mut depth = 0;
    for (k, c) in text[open..].char_indices() {
        match c {
            '{' => depth += 1,
            '}' => {
                depth -= 1;
                if depth == 0 {
                    return open + k;
                }
            }
            _ => {}
        }
    }
    text.len()
}

fn split_top(inner: &str) -> Vec<&str> {
    let mut out = Vec::new();
    let (mut depth, mut from) = (0, 0);
    for (k, c) in inner.char_indices() {
        match c {
            '{' => depth += 1,
            '}' => depth -= 1,
            ',' if depth == 0 => {
                out.push(&inner[from..k]);
                from = k + 1;
            }
            _ => {}
        }
    }
    out.push(&inner[from..]);
    out
}

/// The module a path names: `crate`/`super`/`self` resolved against the
/// importing module, then cut to the longest prefix that is a known module.
fn target(from: &Module, path: &[String], known: &BTreeSet<Module>) -> Option<Module> {
    let mut abs: Module = Vec::new();
    let mut rest = path;
    match path.first().map(String::as_str) {
        Some("crate") => rest = &path[1..],
        Some("self") => {
            abs = from.clone();
            rest = &path[1..];
        }
        Some("super") => {
            abs = from.clone();
            while rest.first().is_some_and(|s| s == "super") {
                abs.pop()?;
                rest = &rest[1..];
            }
        }
        _ => return None,
    }
    abs.extend(rest.iter().cloned());
    while !abs.is_empty() && !known.contains(&abs) {
        abs.pop();
    }
    Some(abs)
}

/// All imports of a crate as (importing module, imported module).
fn imports(src: &Path) -> (Vec<Source>, Vec<(Module, Module, PathBuf)>) {
    let files = sources(src);
    let known: BTreeSet<Module> = files.iter().map(|s| s.module.clone()).collect();
    let mut edges = Vec::new();
    for s in &files {
        for p in paths(&s.text) {
            if let Some(t) = target(&s.module, &p, &known)
                && t != s.module
            {
                edges.push((s.module.clone(), t, s.file.clone()));
            }
        }
    }
    (files, edges)
}

fn crate_src(name: &str) -> PathBuf {
    workspace().join(name).join("src")
}

fn workspace() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the server crate sits in the workspace")
        .to_path_buf()
}

/// A file's path as a contributor types it, from the workspace root.
fn shown(file: &Path) -> String {
    file.strip_prefix(workspace())
        .unwrap_or(file)
        .display()
        .to_string()
}

/// For each parent module, the arrows between its children (each child
/// standing for everything below it). A module using its own parent, or a
/// parent using its own child, is not an arrow between siblings.
fn sibling_graphs(
    edges: &[(Module, Module, PathBuf)],
) -> BTreeMap<Module, BTreeSet<(String, String)>> {
    let mut graphs: BTreeMap<Module, BTreeSet<(String, String)>> = BTreeMap::new();
    for (from, to, _) in edges {
        let common = from.iter().zip(to).take_while(|(a, b)| a == b).count();
        if common < from.len() && common < to.len() {
            graphs
                .entry(from[..common].to_vec())
                .or_default()
                .insert((from[common].clone(), to[common].clone()));
        }
    }
    graphs
}

/// A circle in a directed graph, if there is one.
fn find_circle(arrows: &BTreeSet<(String, String)>) -> Option<Vec<String>> {
    let nodes: BTreeSet<&String> = arrows.iter().flat_map(|(a, b)| [a, b]).collect();
    let mut state: BTreeMap<&String, u8> = nodes.iter().map(|n| (*n, 0)).collect();
    fn visit<'a>(
        n: &'a String,
        arrows: &'a BTreeSet<(String, String)>,
        state: &mut BTreeMap<&'a String, u8>,
        trail: &mut Vec<String>,
    ) -> Option<Vec<String>> {
        state.insert(n, 1);
        trail.push(n.clone());
        for (_, next) in arrows.iter().filter(|(a, _)| a == n) {
            match state[next] {
                1 => {
                    let at = trail.iter().position(|t| t == next).unwrap_or(0);
                    let mut circle = trail[at..].to_vec();
                    circle.push(next.clone());
                    return Some(circle);
                }
                0 => {
                    if let Some(c) = visit(next, arrows, state, trail) {
                        return Some(c);
                    }
                }
                _ => {}
            }
        }
        trail.pop();
        state.insert(n, 2);
        None
    }
    for n in nodes {
        if state[n] == 0
            && let Some(c) = visit(n, arrows, &mut state, &mut Vec::new())
        {
            return Some(c);
        }
    }
    None
}

fn circles_in(crate_name: &str) -> Vec<String> {
    let (_, edges) = imports(&crate_src(crate_name));
    let mut found = Vec::new();
    for (parent, arrows) in sibling_graphs(&edges) {
        if let Some(c) = find_circle(&arrows) {
            found.push(format!(
                "{crate_name}: circle inside `{}`: {}",
                if parent.is_empty() {
                    "crate".into()
                } else {
                    parent.join("::")
                },
                c.join(" -> ")
            ));
        }
    }
    found
}

fn starts_with(module: &Module, prefix: &str) -> bool {
    let p: Vec<&str> = prefix.split("::").collect();
    module.len() >= p.len() && module.iter().zip(&p).all(|(a, b)| a == b)
}

fn rule_for<'a>(
    table: &'a [(&'a str, &'a [&'a str])],
    m: &Module,
) -> Option<(&'a str, &'a [&'a str])> {
    table
        .iter()
        .filter(|(name, _)| starts_with(m, name))
        .max_by_key(|(name, _)| name.len())
        .copied()
}

/// Imports that break the layer table or a pure module's list.
fn layer_breaks(edges: &[(Module, Module, PathBuf)]) -> Vec<String> {
    let mut out = Vec::new();
    for (from, to, file) in edges {
        let (Some(f), Some(t)) = (from.first(), to.first()) else {
            continue;
        };
        if f == t && rule_for(PURE, from).is_none() {
            continue;
        }
        let why = match rule_for(PURE, from) {
            Some((name, allowed)) if !starts_with(to, name) => {
                (!allowed.iter().any(|a| starts_with(to, a)))
                    .then(|| format!("pure `{name}` may import only {allowed:?}"))
            }
            Some(_) => None,
            None => {
                let allowed = LAYERS
                    .iter()
                    .find(|(n, _)| n == f)
                    .map(|(_, a)| *a)
                    .unwrap_or(&[]);
                (f != t && !allowed.contains(&t.as_str()))
                    .then(|| format!("`{f}` may import only {allowed:?}"))
            }
        };
        if let Some(why) = why {
            out.push(format!(
                "{} imports `{}`: {why}",
                shown(file),
                to.join("::")
            ));
        }
    }
    out.sort();
    out.dedup();
    out
}

#[test]
fn every_top_level_server_module_is_in_the_layer_table() {
    let (files, _) = imports(&crate_src("server"));
    let tops: BTreeSet<&str> = files
        .iter()
        .filter_map(|s| s.module.first().map(String::as_str))
        .filter(|m| !matches!(*m, "cli"))
        .collect();
    let listed: BTreeSet<&str> = LAYERS.iter().map(|(n, _)| *n).collect();
    assert_eq!(
        tops, listed,
        "server/src top-level modules vs the layer table"
    );
}

#[test]
fn no_import_circles_in_either_crate() {
    let mut found = circles_in("server");
    found.extend(circles_in("sync"));
    assert!(found.is_empty(), "import circles:\n{}", found.join("\n"));
}

#[test]
fn no_server_import_runs_against_the_layers() {
    let (_, edges) = imports(&crate_src("server"));
    let breaks = layer_breaks(&edges);
    assert!(
        breaks.is_empty(),
        "imports against the layers:\n{}",
        breaks.join("\n")
    );
}

#[test]
fn sql_and_http_stay_in_their_layers() {
    let (files, _) = imports(&crate_src("server"));
    let mut out = Vec::new();
    for s in &files {
        for (krate, home) in ONLY_IN {
            let used = if *krate == "rusqlite" && starts_with(&s.module, "domain") {
                // The vocabulary converts its words to and from SQLite
                // values (`rusqlite::types`), but holds no connection or SQL.
                beyond_value_conversion(&s.text)
            } else {
                s.text.contains(&format!("{krate}::"))
            };
            let at_home = starts_with(&s.module, home)
                || s.module.first().is_some_and(|m| m == "cli" || m == "error");
            if used && !at_home {
                out.push(format!("{} uses {krate} outside {home}", shown(&s.file)));
            }
        }
    }
    assert!(out.is_empty(), "{}", out.join("\n"));
}

/// True when a `rusqlite` path other than a value conversion
/// (`rusqlite::types::…`, `rusqlite::Result`) appears.
fn beyond_value_conversion(text: &str) -> bool {
    text.match_indices("rusqlite::").any(|(at, _)| {
        let rest = &text[at + "rusqlite::".len()..];
        !(rest.starts_with("types::") || rest.starts_with("types") || rest.starts_with("Result"))
    })
}

#[test]
fn the_check_sees_a_planted_circle_and_a_planted_arrow_up() {
    // Two siblings that use each other, and a platform module reaching up
    // into the flow: both must be reported.
    let a: Module = vec!["platform".into(), "storage".into()];
    let b: Module = vec!["platform".into(), "auth".into()];
    let up: Module = vec!["web".into()];
    let edges = vec![
        (a.clone(), b.clone(), PathBuf::from("a.rs")),
        (b.clone(), a.clone(), PathBuf::from("b.rs")),
        (a.clone(), up, PathBuf::from("a.rs")),
    ];
    let graphs = sibling_graphs(&edges);
    assert!(find_circle(&graphs[&vec!["platform".to_string()]]).is_some());
    assert_eq!(layer_breaks(&edges).len(), 1);
    let known: BTreeSet<Module> = [a.clone(), b.clone()].into_iter().collect();
    let text =
        "use super::{auth::Role, storage};\nlet x = crate::platform::auth::f(); // crate::web\n";
    let found: Vec<Module> = paths(&code_only(text))
        .iter()
        .filter_map(|p| target(&a, p, &known))
        .collect();
    assert_eq!(found, vec![b.clone(), a.clone(), b]);
}
