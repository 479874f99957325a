//! access (in progress).
