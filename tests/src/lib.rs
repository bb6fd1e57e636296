//! Shared helpers for the cross-crate test suite live in `tests/suite/util.rs`; this library
//! is empty so the crate has a home in the workspace.
