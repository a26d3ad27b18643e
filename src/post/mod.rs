//! Stage 6, post: writes the fitted cuts as a G-code program for one machine profile.
//!
//! The dialect is RS274/NGC as NISTIR 6556 describes it (T. R. Kramer, F. M. Proctor,
//! E. R. Messina, *The NIST RS274NGC Interpreter – Version 3*, NIST, 2000): `%` delimiters
//! (§3.1), `( )` comments only (§3.3.4), lines under 256 characters (§3.3), numbers with a fixed
//! number of decimals and no exponent (§3.3.2.1), G20/G21 units (§3.5.7), G90 absolute distance,
//! G17 plane, G94 feed per minute, M30 program end (§3.6.1).
//!
//! Everything the machine decides (units, decimals, line numbers, spindle words, feeds, heights,
//! travel envelope) comes from a [`MachineProfile`] read from TOML. Every program opens with
//! safety cautions for the profile's kind of machine and the statement that the machine maker's
//! manual and local rules take precedence.
//!
//! # Units
//!
//! Cuts and [`ProgramSettings`] are in millimetres (feeds in mm/min); the profile's values are in
//! the profile's units. Lengths are converted to the profile's units only as the program is
//! written.

mod number;
mod profile;
mod program;
mod safety;

pub use number::format_number;
pub use profile::{
    MAX_DECIMALS, METRIC_MILL_TOML, MM_PER_INCH, MachineKind, MachineProfile, ProfileError,
    TravelEnvelope, Units,
};
pub use program::{PostError, ProgramSettings, sanitize, write_program};
pub use safety::{PRECEDENCE, SAFETY_HEADING, cautions};
