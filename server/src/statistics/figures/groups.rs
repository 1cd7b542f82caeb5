//! Tallies of events per group: each event's groups are looked up as small
//! dense ids, and the tallies are plain vectors indexed by them; names are
//! made once per group.

use std::collections::HashMap;
use std::hash::Hash;
use std::ops::AddAssign;

use super::facts::{EventFacts, GroupKey, Month, NO_VALUE, Values};

/// Fx hash: the keys are short names and numbers made by the server.
type FxBuild = rustc_hash::FxBuildHasher;

/// Small dense ids for values, in order of first appearance.
#[derive(Debug)]
pub(crate) struct Interner<T> {
    ids: HashMap<T, u32, FxBuild>,
    values: Vec<T>,
    /// The value last asked for, with its id: runs of one value (a key
    /// with one group, most events of one kind) skip the hash.
    last: Option<(T, u32)>,
}

impl<T> Default for Interner<T> {
    fn default() -> Self {
        Interner {
            ids: HashMap::default(),
            values: Vec::new(),
            last: None,
        }
    }
}

impl<T: Copy + Eq + Hash> Interner<T> {
    /// The id of `value`, a new one the first time it is met.
    pub(crate) fn id(&mut self, value: T) -> u32 {
        match self.last {
            Some((last, id)) if last == value => id,
            _ => {
                let id = self.lookup(value);
                self.last = Some((value, id));
                id
            }
        }
    }

    fn lookup(&mut self, value: T) -> u32 {
        if let Some(&id) = self.ids.get(&value) {
            return id;
        }
        let id = self.values.len() as u32;
        self.values.push(value);
        self.ids.insert(value, id);
        id
    }

    /// Every value met, by id.
    pub(crate) fn values(&self) -> &[T] {
        &self.values
    }
}

/// Tallies of `one` (what an event adds to a tally) over each group of
/// `key` (an event counts once in each of its groups, see
/// [`GroupKey::groups`]), added in the order of `events`; they come out
/// with their group names, sorted by name (as a map keyed by the names
/// would give them).
pub(crate) fn tally_by<A: Tally>(
    events: &[EventFacts],
    key: GroupKey,
    one: impl Fn(&EventFacts) -> A,
) -> Vec<(String, A)> {
    tally_by_keys(events, &[key], one).pop().unwrap_or_default()
}

/// [`tally_by`] for several keys in one pass over the events, in the order
/// of `keys`.
pub(crate) fn tally_by_keys<A: Tally>(
    events: &[EventFacts],
    keys: &[GroupKey],
    one: impl Fn(&EventFacts) -> A,
) -> Vec<Vec<(String, A)>> {
    let mut tallies = Tallies::new(keys);
    events.iter().for_each(|e| tallies.add(e, one(e)));
    tallies.finish()
}

/// The tallies of [`tally_by_keys`], gathered event by event.
pub(crate) struct Tallies<'a, A> {
    keys: Vec<KeyTally<'a, A>>,
}

impl<'a, A: Tally> Tallies<'a, A> {
    pub(crate) fn new(keys: &[GroupKey]) -> Self {
        Tallies {
            keys: keys.iter().map(|&k| KeyTally::new(k)).collect(),
        }
    }

    /// Adds `one` to each group of `e` for each key.
    pub(crate) fn add(&mut self, e: &'a EventFacts, one: A) {
        for t in &mut self.keys {
            t.add(e, one);
        }
    }

    /// For each key, the tallies with their names, sorted by name.
    pub(crate) fn finish(self) -> Vec<Vec<(String, A)>> {
        self.keys.into_iter().map(KeyTally::finish).collect()
    }
}

/// What an event adds to the tally of each of its groups.
pub(crate) trait Tally: Copy + Default + AddAssign {}

impl<A: Copy + Default + AddAssign> Tally for A {}

/// The tallies of one key while the events are read.
struct KeyTally<'a, A> {
    key: GroupKey,
    /// Group ids: a key gives names or months, never both, so the ids of
    /// one interner are the ids of the tallies.
    names: Interner<&'a str>,
    months: Interner<Month>,
    tallies: Vec<A>,
    /// The ids an event has counted in so far (for keys with several values).
    seen: Vec<u32>,
}

impl<'a, A: Tally> KeyTally<'a, A> {
    fn new(key: GroupKey) -> Self {
        KeyTally {
            key,
            names: Interner::default(),
            months: Interner::default(),
            tallies: Vec::new(),
            seen: Vec::new(),
        }
    }

    /// Adds `one` to each group of `e`.
    fn add(&mut self, e: &'a EventFacts, one: A) {
        match self.key.values(e) {
            Values::Name(name) => {
                let id = self.names.id(name);
                self.count(id, one);
            }
            Values::Month(month) => {
                let id = self.months.id(month);
                self.count(id, one);
            }
            Values::Many([]) => {
                let id = self.names.id(NO_VALUE);
                self.count(id, one);
            }
            Values::Many(list) => {
                // Distinct ids are distinct values.
                self.seen.clear();
                for value in list {
                    let id = self.names.id(value.as_str());
                    if !self.seen.contains(&id) {
                        self.seen.push(id);
                        self.count(id, one);
                    }
                }
            }
        }
    }

    fn count(&mut self, id: u32, one: A) {
        let id = id as usize;
        if self.tallies.len() <= id {
            self.tallies.resize_with(id + 1, A::default);
        }
        self.tallies[id] += one;
    }

    /// The tallies with their names, sorted by name.
    fn finish(self) -> Vec<(String, A)> {
        debug_assert!(self.names.values().is_empty() || self.months.values().is_empty());
        let names = self.names.values().iter().map(ToString::to_string);
        let months = self.months.values().iter().map(ToString::to_string);
        let mut named: Vec<(String, A)> = names.chain(months).zip(self.tallies).collect();
        named.sort_unstable_by(|a, b| a.0.cmp(&b.0));
        named
    }
}
