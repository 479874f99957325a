//! The findings document as JSON (`--json`). The format is documented once, beside its
//! types, in [`crate::findings`].

use crate::findings::Report;

/// Serialises the findings document: pretty-printed, keys in a fixed order, ending with a
/// newline, so that two runs over the same inputs differ only in `generated_at`.
pub fn to_bytes(report: &Report) -> serde_json::Result<Vec<u8>> {
    let mut bytes = serde_json::to_vec_pretty(report)?;
    bytes.push(b'\n');
    Ok(bytes)
}
