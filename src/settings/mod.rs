//! Settings: what the user asked for (command line and job file) and the machine profile,
//! turned into the options each stage runs with.
//!
//! Today this module holds [`defaults`], where every default the command line and the job
//! pipeline fall back on is defined once, with its reason.

pub mod defaults;
