//! check (in progress).
