//! The command line's own helpers (part of the binary, not of the library): the progress bar,
//! and running `plan` on several drawings.

pub mod batch;
pub mod progress;
