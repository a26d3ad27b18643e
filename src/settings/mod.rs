//! Settings: what the user asked for (command line and job file) and the machine profile,
//! turned into the options each stage runs with.
//!
//! - [`defaults`]: every default the command line and the pipeline fall back on, defined once
//!   with its reason.
//! - [`job_file`]: TOML job files (features, rules, cut kinds, lead keys) in mm.
//! - [`profile`]: reading and checking a machine profile's TOML into a `post::MachineProfile`.
//! - `toml_text`: line numbers and keys in TOML text, shared by both readers.

pub mod defaults;
pub mod job_file;
pub mod profile;
mod toml_text;

pub use profile::{BUNDLED_PROFILES, METRIC_MILL_TOML, ProfileError};
