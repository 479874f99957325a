//! The text engine: everything plumbline knows about reading English text.
//!
//! * [`normalize`] — NFKC, case folding, look-alike punctuation unified and invisible
//!   control characters dropped, with a map back to the original bytes;
//! * [`tokens`] — words (UAX #29), stems, stop words and typed figures, each token keeping
//!   the byte range it came from in the original text;
//! * [`numbers`] — figures (amounts, percentages, times, dates, spelled numbers) with a
//!   canonical value so that `1,200` and `1 200` compare equal;
//! * [`sentences`] — UAX #29 sentence boundaries plus the rules a chat answer needs.
//!
//! Every function here is pure and deterministic, and every range it returns lies on
//! character boundaries of the text it was given.

pub mod normalize;
pub mod numbers;
pub mod sentences;
pub mod lexicon;
pub mod stem;
pub mod stopwords;
pub mod tokens;
