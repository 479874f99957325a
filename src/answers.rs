//! answers (in progress).
