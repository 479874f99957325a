//! citations (in progress).
