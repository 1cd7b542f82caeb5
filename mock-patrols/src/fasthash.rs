//! A small, fast, deterministic hasher for integer grid keys.
//!
//! The generators dedupe millions of `(i64, i64)` cells; the standard SipHash
//! is several times slower for that and needs no protection here, because the
//! keys come from our own seeded generator, never from outside input.

use std::collections::{HashMap, HashSet};
use std::hash::{BuildHasherDefault, Hasher};

/// Multiply-rotate hasher in the style of the Firefox "Fx" hash (common practice).
#[derive(Default, Clone, Copy)]
pub(crate) struct GridHasher(u64);

const K: u64 = 0x517c_c1b7_2722_0a95;

impl Hasher for GridHasher {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.write_u64(u64::from(b));
        }
    }
    fn write_u64(&mut self, i: u64) {
        self.0 = (self.0.rotate_left(5) ^ i).wrapping_mul(K);
    }
    fn write_i64(&mut self, i: i64) {
        self.write_u64(i as u64);
    }
    fn write_i32(&mut self, i: i32) {
        self.write_u64(u64::from(i as u32));
    }
}

pub(crate) type GridSet<T> = HashSet<T, BuildHasherDefault<GridHasher>>;
pub(crate) type GridMap<K, V> = HashMap<K, V, BuildHasherDefault<GridHasher>>;
