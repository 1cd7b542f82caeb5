//! Message catalogues of the pages and the field app, in Fluent
//! (`templates/i18n/<lang>/*.ftl`, embedded in the binary), and [`Tr`], the
//! translator a page template calls:
//!
//! ```text
//! {{ layout.tr.t("nav-events") }}                    a message
//! {{ layout.tr.t1("import-added", "n", added) }}     one variable ({ $n } in the .ftl)
//! {{ layout.tr.t2("who", "name", user, "role", r) }} two variables
//! ```
//!
//! A number given as a variable stays a number, so a message may choose its
//! plural form (`{ $n -> [one] … *[other] … }`). A message missing in a
//! language falls back to English, then to its id; [`check`] (run at start-up
//! and by a unit test) makes sure no language lacks one. The field app reads
//! `field.ftl` of the same folders (see DEVELOPERS.md "Languages").

use fluent_bundle::concurrent::FluentBundle;
use fluent_bundle::{FluentArgs, FluentResource, FluentValue};
use std::sync::OnceLock;

/// The languages we have, as codes; the index of a code is its [`Tr`].
pub const LANGUAGES: [&str; 5] = ["en", "es", "fr", "id", "pt"];

/// Catalogue files of one language: (file name, text).
type Files = [(&'static str, &'static str); 2];

macro_rules! catalogue {
    ($lang:literal) => {
        (
            $lang,
            [
                (
                    "field.ftl",
                    include_str!(concat!("../../../templates/i18n/", $lang, "/field.ftl")),
                ),
                (
                    "pages.ftl",
                    include_str!(concat!("../../../templates/i18n/", $lang, "/pages.ftl")),
                ),
            ],
        )
    };
}

/// Every catalogue, in the order of [`LANGUAGES`].
pub const CATALOGUES: [(&str, Files); 5] = [
    catalogue!("en"),
    catalogue!("es"),
    catalogue!("fr"),
    catalogue!("id"),
    catalogue!("pt"),
];

/// The field app's catalogue of `lang` (served at `/field/i18n/<lang>/field.ftl`).
pub fn field_catalogue(lang: &str) -> Option<&'static str> {
    CATALOGUES
        .iter()
        .find(|(l, _)| *l == lang)
        .map(|(_, files)| files[0].1)
}

type Bundle = FluentBundle<FluentResource>;

/// One bundle per language, built once; parse errors are reported by [`check`]
/// (the parts that parse are kept).
fn bundles() -> &'static [Bundle] {
    static B: OnceLock<Vec<Bundle>> = OnceLock::new();
    B.get_or_init(|| CATALOGUES.iter().map(|(l, f)| bundle(l, f).0).collect())
}

fn bundle(lang: &str, files: &Files) -> (Bundle, Vec<String>) {
    let id: unic_langid::LanguageIdentifier = lang.parse().unwrap_or_default();
    let mut b = FluentBundle::new_concurrent(vec![id]);
    b.set_use_isolating(false);
    let mut problems = Vec::new();
    for (name, text) in files {
        let res = match FluentResource::try_new(text.to_string()) {
            Ok(r) => r,
            Err((r, errs)) => {
                problems.extend(errs.iter().map(|e| format!("{lang}/{name}: {e:?}")));
                r
            }
        };
        if let Err(errs) = b.add_resource(res) {
            problems.extend(errs.iter().map(|e| format!("{lang}/{name}: {e:?}")));
        }
    }
    (b, problems)
}

type Vars = std::collections::BTreeSet<String>;

/// Message ids of one catalogue file, with the variables each uses.
fn ids(text: &str) -> std::collections::BTreeMap<String, Vars> {
    use fluent_syntax::ast::Entry;
    let res = match FluentResource::try_new(text.to_string()) {
        Ok(r) | Err((r, _)) => r,
    };
    let mut out = std::collections::BTreeMap::new();
    for entry in res.entries() {
        if let Entry::Message(m) = entry {
            let mut vars = Vars::new();
            if let Some(p) = &m.value {
                pattern_vars(p, &mut vars);
            }
            out.insert(m.id.name.to_string(), vars);
        }
    }
    out
}

fn pattern_vars(p: &fluent_syntax::ast::Pattern<&str>, vars: &mut Vars) {
    use fluent_syntax::ast::{Expression, PatternElement};
    for el in &p.elements {
        if let PatternElement::Placeable { expression } = el {
            match expression {
                Expression::Inline(e) => inline_vars(e, vars),
                Expression::Select { selector, variants } => {
                    inline_vars(selector, vars);
                    for v in variants {
                        pattern_vars(&v.value, vars);
                    }
                }
            }
        }
    }
}

fn inline_vars(e: &fluent_syntax::ast::InlineExpression<&str>, vars: &mut Vars) {
    use fluent_syntax::ast::InlineExpression as I;
    match e {
        I::VariableReference { id } => {
            vars.insert(id.name.to_string());
        }
        I::FunctionReference { arguments, .. } => {
            for a in &arguments.positional {
                inline_vars(a, vars);
            }
        }
        I::Placeable { expression } => pattern_vars(
            &fluent_syntax::ast::Pattern {
                elements: vec![fluent_syntax::ast::PatternElement::Placeable {
                    expression: (**expression).clone(),
                }],
            },
            vars,
        ),
        _ => {}
    }
}

/// Every catalogue parses, and every language has every message of English
/// (file by file), no other, with the same variables. The problems, one a line.
pub fn check() -> Result<(), Vec<String>> {
    let mut problems = Vec::new();
    for (lang, files) in &CATALOGUES {
        problems.extend(bundle(lang, files).1);
    }
    let english = &CATALOGUES[0].1;
    for (lang, files) in &CATALOGUES[1..] {
        for ((name, en_text), (_, text)) in english.iter().zip(files.iter()) {
            let (en, other) = (ids(en_text), ids(text));
            for (id, vars) in &en {
                match other.get(id) {
                    None => problems.push(format!("{lang}/{name}: missing {id}")),
                    Some(v) if v != vars => {
                        problems.push(format!("{lang}/{name}: {id} uses {v:?}, English {vars:?}"))
                    }
                    Some(_) => {}
                }
            }
            for id in other.keys().filter(|k| !en.contains_key(*k)) {
                problems.push(format!("{lang}/{name}: {id} is not in English"));
            }
        }
    }
    if problems.is_empty() {
        Ok(())
    } else {
        Err(problems)
    }
}

/// A user's own choice of language (a request extension set by the auth
/// layer from storage).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ChosenLanguage(pub String);

/// A value for a message variable: text, or a number (which plural rules see).
pub trait Arg {
    fn value(&self) -> FluentValue<'static>;
}

impl Arg for str {
    fn value(&self) -> FluentValue<'static> {
        FluentValue::from(self.to_string())
    }
}
impl Arg for String {
    fn value(&self) -> FluentValue<'static> {
        FluentValue::from(self.clone())
    }
}
macro_rules! number_arg {
    ($($t:ty),*) => {$(impl Arg for $t {
        fn value(&self) -> FluentValue<'static> {
            FluentValue::from(*self)
        }
    })*};
}
number_arg!(i32, i64, u32, u64, usize, f64);
impl<T: Arg + ?Sized> Arg for &T {
    fn value(&self) -> FluentValue<'static> {
        (**self).value()
    }
}

/// The translator of one language: what pages call (see the module text).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Tr(usize);

impl Tr {
    /// The translator of `lang` (a code of [`LANGUAGES`]; English otherwise).
    pub fn new(lang: &str) -> Tr {
        Tr(LANGUAGES.iter().position(|l| *l == lang).unwrap_or(0))
    }

    /// This translator's language code (for `<html lang>`).
    pub fn lang(&self) -> &'static str {
        LANGUAGES[self.0]
    }

    fn format(&self, id: &str, args: Option<&FluentArgs<'_>>) -> String {
        let all = bundles();
        for b in [&all[self.0], &all[0]] {
            if let Some(pattern) = b.get_message(id).and_then(|m| m.value()) {
                let mut errors = Vec::new();
                let text = b.format_pattern(pattern, args, &mut errors);
                if errors.is_empty() {
                    return text.into_owned();
                }
            }
        }
        id.to_string()
    }

    /// The message `id` in this language or English, if a catalogue has it.
    pub fn get(&self, id: &str) -> Option<String> {
        let all = bundles();
        let has = all[self.0].has_message(id) || all[0].has_message(id);
        has.then(|| self.t(id))
    }

    /// The message `id`.
    pub fn t(&self, id: &str) -> String {
        self.format(id, None)
    }

    /// The message `id` with the variable `name`.
    pub fn t1(&self, id: &str, name: &str, value: impl Arg) -> String {
        let mut a = FluentArgs::new();
        a.set(name.to_string(), value.value());
        self.format(id, Some(&a))
    }

    /// The message `id` with two variables.
    pub fn t2(&self, id: &str, n1: &str, v1: impl Arg, n2: &str, v2: impl Arg) -> String {
        let mut a = FluentArgs::new();
        a.set(n1.to_string(), v1.value());
        a.set(n2.to_string(), v2.value());
        self.format(id, Some(&a))
    }

    /// The message `id` with three variables.
    #[allow(clippy::too_many_arguments)]
    pub fn t3(
        &self,
        id: &str,
        n1: &str,
        v1: impl Arg,
        n2: &str,
        v2: impl Arg,
        n3: &str,
        v3: impl Arg,
    ) -> String {
        let mut a = FluentArgs::new();
        a.set(n1.to_string(), v1.value());
        a.set(n2.to_string(), v2.value());
        a.set(n3.to_string(), v3.value());
        self.format(id, Some(&a))
    }

    /// The message `id` with any number of variables (name, value).
    pub fn tn(&self, id: &str, vars: &[(&str, &dyn Arg)]) -> String {
        let mut a = FluentArgs::new();
        for (name, value) in vars {
            a.set(name.to_string(), value.value());
        }
        self.format(id, Some(&a))
    }
}

/// The language of a page: the user's own choice, else the first language of
/// `accept_language` (by its q weights) that we have, else `default`.
pub fn negotiate(choice: Option<&str>, accept_language: Option<&str>, default: &str) -> Tr {
    if let Some(c) = choice.filter(|c| LANGUAGES.contains(c)) {
        return Tr::new(c);
    }
    if let Some(lang) = accept_language.and_then(from_accept_language) {
        return Tr::new(lang);
    }
    Tr::new(default)
}

/// The best of our languages in an `Accept-Language` header (RFC 9110
/// §12.5.4: tags with q weights; q=0 means "not this one").
fn from_accept_language(header: &str) -> Option<&'static str> {
    let mut wanted: Vec<(f32, usize, &str)> = header
        .split(',')
        .take(32)
        .enumerate()
        .filter_map(|(i, part)| {
            let mut it = part.split(';');
            let tag = it.next()?.trim();
            let q = it
                .find_map(|p| p.trim().strip_prefix("q="))
                .map_or(Some(1.0), |v| v.trim().parse::<f32>().ok())?;
            (q > 0.0 && !tag.is_empty()).then_some((q, i, tag))
        })
        .collect();
    wanted.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
    wanted.iter().find_map(|(_, _, tag)| {
        let id: unic_langid::LanguageIdentifier = tag.parse().ok()?;
        let base = match id.language.as_str() {
            "in" => "id", // the old code for Indonesian
            l => l,
        };
        LANGUAGES.iter().find(|l| **l == base).copied()
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_language_has_every_message_of_english() {
        if let Err(problems) = check() {
            panic!("catalogues disagree:\n{}", problems.join("\n"));
        }
    }

    #[test]
    fn the_check_finds_a_missing_message() {
        let en = ids("a = A\nb = B { $n }\n");
        let pt = ids("a = A\nb = B { $m }\n");
        assert_eq!(en.len(), 2);
        assert_ne!(en["b"], pt["b"], "variables are compared");
    }

    #[test]
    fn messages_fall_back_to_english_then_to_the_id() {
        let pt = Tr::new("pt");
        assert_eq!(pt.lang(), "pt");
        assert_eq!(pt.t("language-label"), "Idioma");
        assert_eq!(Tr::new("xx").lang(), "en");
        assert_eq!(pt.t("no-such-message"), "no-such-message");
        assert_eq!(
            Tr::new("en").t2("home-opened", "team", "North", "stops", 3),
            "Trip for North opened. Stops: 3."
        );
    }

    #[test]
    fn the_language_is_the_choice_then_the_browser_then_the_default() {
        assert_eq!(negotiate(Some("fr"), Some("pt-BR"), "en").lang(), "fr");
        assert_eq!(
            negotiate(None, Some("pt-BR,pt;q=0.9,en;q=0.8"), "en").lang(),
            "pt"
        );
        // Weights, not order, decide (RFC 9110 §12.5.4).
        assert_eq!(
            negotiate(None, Some("de;q=0.9, es;q=0.5, fr;q=0.7"), "en").lang(),
            "fr"
        );
        assert_eq!(negotiate(None, Some("in-ID"), "en").lang(), "id");
        assert_eq!(negotiate(None, Some("pt;q=0, de"), "es").lang(), "es");
        assert_eq!(negotiate(Some("xx"), None, "id").lang(), "id");
        assert_eq!(negotiate(None, Some(";;,q=,*"), "en").lang(), "en");
    }
}
