//! The command line's own helpers (part of the binary, not of the library): the progress bar,
//! running `plan` on several drawings, and writing each output set all or nothing.

pub mod batch;
pub mod outputs;
pub mod progress;
