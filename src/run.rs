//! run (in progress).
