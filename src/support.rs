//! support (in progress).
