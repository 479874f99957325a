//! config (in progress).
