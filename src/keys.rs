//! Dense numbering of `u64` keys (joint codes, score bits) in first-seen order.
//!
//! An open-addressing table with multiplicative (Fibonacci) hashing and linear
//! probing (Knuth, TAOCP vol. 3, §6.4): one array of `u32` slots and the keys in
//! order of first appearance. It replaces a general hash map where a pass over
//! a million rows must number their keys, which is several times faster here
//! than `std`'s SipHash map and allocates twice.

/// Numbers distinct keys `0, 1, 2, …` as they are first seen, up to a limit.
pub struct KeyIndex {
    /// Key index + 1 per slot; 0 marks an empty slot.
    slots: Vec<u32>,
    /// Distinct keys, in order of first appearance.
    keys: Vec<u64>,
    limit: usize,
    shift: u32,
}

impl KeyIndex {
    /// A table that numbers at most `limit` distinct keys (at most `u32::MAX - 1`).
    #[must_use]
    pub fn with_limit(limit: usize) -> Self {
        let limit = limit.min(u32::MAX as usize - 1);
        let capacity = (2 * limit).next_power_of_two().max(16);
        Self {
            slots: vec![0; capacity],
            keys: Vec::new(),
            limit,
            shift: 64 - capacity.trailing_zeros(),
        }
    }

    /// The number of `key`, numbering it if new; `None` when a new key would
    /// exceed the limit.
    pub fn number(&mut self, key: u64) -> Option<u32> {
        let mask = self.slots.len() - 1;
        let mut slot = (key.wrapping_mul(0x9E37_79B9_7F4A_7C15) >> self.shift) as usize;
        loop {
            match self.slots[slot] {
                0 => {
                    if self.keys.len() == self.limit {
                        return None;
                    }
                    self.keys.push(key);
                    self.slots[slot] = self.keys.len() as u32;
                    return Some(self.keys.len() as u32 - 1);
                }
                n if self.keys[n as usize - 1] == key => return Some(n - 1),
                _ => slot = (slot + 1) & mask,
            }
        }
    }

    /// Distinct keys numbered so far, in order of first appearance.
    #[must_use]
    pub fn keys(&self) -> &[u64] {
        &self.keys
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;
    use std::collections::HashMap;

    #[test]
    fn numbers_keys_in_first_seen_order_like_a_hash_map() {
        let mut rng = SplitMix64::new(5);
        let keys: Vec<u64> = (0..20_000).map(|_| rng.next_u64() % 3_000).collect();
        let mut index = KeyIndex::with_limit(keys.len());
        let mut reference: HashMap<u64, u32> = HashMap::new();
        for &key in &keys {
            let next = reference.len() as u32;
            let expected = *reference.entry(key).or_insert(next);
            assert_eq!(index.number(key), Some(expected));
        }
        assert_eq!(index.keys().len(), reference.len());
    }

    #[test]
    fn refuses_a_new_key_beyond_the_limit_but_still_finds_known_ones() {
        let mut index = KeyIndex::with_limit(2);
        assert_eq!(index.number(7), Some(0));
        assert_eq!(index.number(u64::MAX), Some(1));
        assert_eq!(index.number(3), None);
        assert_eq!(index.number(7), Some(0));
    }
}
