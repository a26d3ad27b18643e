//! Settings: what the user asked for (command line and job file) and the machine profile,
//! read, checked and resolved once into the options each stage runs with.
//!
//! - [`defaults`]: every default the command line and the pipeline fall back on, defined once
//!   with its reason.
//! - [`job_file`]: TOML job files (features, rules, cut kinds, lead keys) in mm.
//! - [`profile`]: reading and checking a machine profile's TOML into a `post::MachineProfile`.
//! - [`request`]: the request, [`JobSettings`], as the command line and job file give it.
//! - [`resolve`]: the request and the profile turned into a [`ResolvedJob`] (tool, depth, the
//!   tolerance budget, leads, tabs, direction, each stage's options), or a [`SettingsError`].
//! - [`words`]: the words for lead shapes and directions, the same everywhere.
//! - `toml_text`: line numbers and keys in TOML text, shared by both readers.

pub mod defaults;
pub mod job_file;
pub mod profile;
pub mod request;
pub mod resolve;
mod toml_text;
pub mod words;

pub use profile::{BUNDLED_PROFILES, METRIC_MILL_TOML, Machine, MachineDefaults, ProfileError};
pub use request::{JobSettings, LeadRequest, TabRequest};
pub use resolve::{ResolvedJob, SettingsError, ToleranceBudget, ranges, resolve};
