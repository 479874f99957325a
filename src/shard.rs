//! Sharding a large answers log over many machines (`check --shard K/N`).
//!
//! An answer belongs to shard K (1-based) of N when the 64-bit FNV-1a hash of its id's
//! UTF-8 bytes, modulo N, equals K − 1. FNV-1a (Fowler, Noll and Vo; the parameters of
//! the IETF draft `draft-eastlake-fnv`: offset basis `0xcbf29ce484222325`, prime
//! `0x100000001b3`) is fixed here, apart from any other hash in the crate, so that the
//! partition never changes between versions: shards made by one machine and merged by
//! another always agree. The same id always lands in the same shard, whatever its line
//! and whatever else the log holds.
//!
//! A line that cannot be read as an answer has no trustworthy id; such lines are reported
//! by shard 1 only, so that merged shards count each once (`plumbline merge`).

use std::str::FromStr;

use serde::{Deserialize, Serialize};

/// 64-bit FNV-1a of `bytes`.
pub fn fnv1a64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

/// How the findings document names the hash (`shard.hash`).
pub const HASH_NAME: &str = "fnv1a64(id) mod n";

/// `--shard K/N`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct Shard {
    /// This shard, 1-based.
    pub k: u64,
    /// Number of shards.
    pub n: u64,
}

impl FromStr for Shard {
    type Err = String;
    fn from_str(s: &str) -> Result<Shard, String> {
        let (k, n) = s.split_once('/').ok_or_else(|| format!("expected K/N, found {s:?}"))?;
        let k: u64 =
            k.trim().parse().map_err(|_| format!("shard K must be a whole number, found {k:?}"))?;
        let n: u64 =
            n.trim().parse().map_err(|_| format!("shard N must be a whole number, found {n:?}"))?;
        if n == 0 || k == 0 || k > n {
            return Err(format!("shard must satisfy 1 ≤ K ≤ N, found {k}/{n}"));
        }
        Ok(Shard { k, n })
    }
}

impl Shard {
    /// The shard (1-based) of `n` that owns the answer with this id.
    pub fn of(id: &str, n: u64) -> u64 {
        fnv1a64(id.as_bytes()) % n.max(1) + 1
    }

    /// Whether the answer with this id belongs to the shard.
    pub fn owns(&self, id: &str) -> bool {
        Shard::of(id, self.n) == self.k
    }

    /// Whether this shard reports the lines that could not be read as answers.
    pub fn reports_rejected(&self) -> bool {
        self.k == 1
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fnv1a64_published_vectors() {
        // Test vectors of the FNV reference code (test_fnv.c, "FNV-1a 64-bit"), as also
        // listed in draft-eastlake-fnv: "", "a", "foobar".
        assert_eq!(fnv1a64(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a64(b"a"), 0xaf63_dc4c_8601_ec8c);
        assert_eq!(fnv1a64(b"foobar"), 0x8594_4171_f739_67e8);
    }

    #[test]
    fn parsing_and_partition() {
        assert!(
            "0/3".parse::<Shard>().is_err()
                && "4/3".parse::<Shard>().is_err()
                && "x".parse::<Shard>().is_err()
                && "1/0".parse::<Shard>().is_err()
        );
        assert_eq!("2/5".parse::<Shard>(), Ok(Shard { k: 2, n: 5 }));
        let shards: Vec<Shard> = (1..=3).map(|k| Shard { k, n: 3 }).collect();
        let mut sizes = [0usize; 3];
        for i in 0..3000 {
            let id = format!("a-{i:04}");
            let owners: Vec<u64> = shards.iter().filter(|s| s.owns(&id)).map(|s| s.k).collect();
            assert_eq!(owners.len(), 1, "{id}");
            sizes[owners[0] as usize - 1] += 1;
        }
        // Every shard gets a fair part (a loose bound: 1000 expected each).
        assert!(sizes.iter().all(|&s| (800..1200).contains(&s)), "{sizes:?}");
    }

    #[test]
    fn one_shard_owns_everything() {
        let s = Shard { k: 1, n: 1 };
        assert!(s.owns("") && s.owns("a-1") && s.owns("é"));
    }
}
