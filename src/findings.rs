//! findings (in progress).
