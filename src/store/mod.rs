//! The document store.
