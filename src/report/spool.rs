//! A spool: findings written to an unnamed temporary file as they are produced and read
//! back in order when the outputs are written, so that a run over a large log keeps only
//! one batch of answers in memory.
//!
//! Items are JSON Lines (`serde_json`, with the `float_roundtrip` feature so that every
//! score reads back as the same `f64`), which is what makes the findings JSON written from
//! a spool byte-for-byte the one written from memory. The file is unlinked as soon as it
//! is created (`tempfile::tempfile`, in `TMPDIR` or the system's temporary directory), so
//! nothing is left behind however the run ends.

use std::fs::File;
use std::io::{self, BufReader, BufWriter, Seek, SeekFrom, Write};
use std::marker::PhantomData;

use serde::Serialize;
use serde::de::DeserializeOwned;

/// Items of type `T`, appended in order and replayed once.
pub struct Spool<T> {
    out: BufWriter<File>,
    len: usize,
    _items: PhantomData<fn() -> T>,
}

impl<T: Serialize + DeserializeOwned> Spool<T> {
    /// An empty spool in a new unnamed temporary file.
    pub fn new() -> io::Result<Spool<T>> {
        Ok(Spool {
            out: BufWriter::with_capacity(1 << 16, tempfile::tempfile()?),
            len: 0,
            _items: PhantomData,
        })
    }

    /// Appends one item.
    pub fn push(&mut self, item: &T) -> io::Result<()> {
        serde_json::to_writer(&mut self.out, item).map_err(io::Error::from)?;
        self.out.write_all(b"\n")?;
        self.len += 1;
        Ok(())
    }

    /// Items appended so far.
    pub fn len(&self) -> usize {
        self.len
    }

    /// Whether nothing was appended.
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// The items, in the order they were appended.
    pub fn replay(self) -> io::Result<Replay<T>> {
        let mut file = self.out.into_inner().map_err(|e| e.into_error())?;
        file.seek(SeekFrom::Start(0))?;
        let reader = BufReader::with_capacity(1 << 16, file);
        Ok(Replay {
            items: serde_json::Deserializer::from_reader(reader).into_iter(),
            left: self.len,
        })
    }
}

/// The items of a [`Spool`], read back one at a time.
pub struct Replay<T> {
    items: serde_json::StreamDeserializer<'static, serde_json::de::IoRead<BufReader<File>>, T>,
    left: usize,
}

impl<T: DeserializeOwned> Iterator for Replay<T> {
    type Item = io::Result<T>;

    fn next(&mut self) -> Option<io::Result<T>> {
        if self.left == 0 {
            return None;
        }
        self.left -= 1;
        Some(match self.items.next() {
            Some(item) => item.map_err(io::Error::from),
            None => Err(io::Error::new(io::ErrorKind::UnexpectedEof, "the spool ended early")),
        })
    }

    fn size_hint(&self) -> (usize, Option<usize>) {
        (self.left, Some(self.left))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replays_in_order_with_exact_floats() {
        // Scores are rounded to six decimals; every one must read back as the same f64.
        let values: Vec<(String, f64)> = (0..20_000)
            .map(|i| {
                (
                    format!("a-{i}\n\"quoted\" </script>"),
                    crate::findings::round6(i as f64 / 19_997.0),
                )
            })
            .chain([("tiny".into(), 1e-6), ("third".into(), 1.0 / 3.0), ("max".into(), f64::MAX)])
            .collect();
        let mut spool = Spool::new().expect("spool");
        for v in &values {
            spool.push(v).expect("push");
        }
        assert_eq!(spool.len(), values.len());
        let back: Vec<(String, f64)> =
            spool.replay().expect("replay").collect::<io::Result<_>>().expect("items");
        assert_eq!(back.len(), values.len());
        for (a, b) in values.iter().zip(&back) {
            assert_eq!(a.0, b.0);
            assert_eq!(a.1.to_bits(), b.1.to_bits(), "{} read back as {}", a.1, b.1);
        }
    }

    #[test]
    fn an_empty_spool_replays_nothing() {
        let spool: Spool<u32> = Spool::new().expect("spool");
        assert!(spool.is_empty());
        assert_eq!(spool.replay().expect("replay").count(), 0);
    }
}
