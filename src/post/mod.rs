//! Stage 6, post: writes the fitted cuts as a G-code program for one machine profile.
//!
//! The dialect is RS274/NGC as NISTIR 6556 describes it (T. R. Kramer, F. M. Proctor,
//! E. R. Messina, *The NIST RS274NGC Interpreter – Version 3*, NIST, 2000): `%` delimiters
//! (§3.1), `( )` comments (§3.3.4; a `;` style is a profile option), lines under 256 characters
//! (§3.3), numbers with a fixed number of decimals and no exponent (§3.3.2.1), G20/G21 units
//! (§3.5.7), G90 absolute distance, G17 plane, G94 feed per minute, arcs in centre format with
//! `I`, `J` incremental from the arc's start (§3.5.3.2, §3.5.17), G4 dwell (§3.5.4), M30 program
//! end (§3.6.1).
//!
//! Everything the machine decides (kind, units, arc form, decimals, line numbers, comment style,
//! spindle or process words, feeds, heights, travel envelope) comes from a [`MachineProfile`] read
//! from TOML. Every program opens with safety cautions for the profile's kind of machine and the
//! statement that the machine maker's manual and local rules take precedence.
//!
//! # Units
//!
//! Cuts and [`ProgramSettings`] are in millimetres (feeds in mm/min); the profile's values are in
//! the profile's units. Lengths are converted to the profile's units only as the program is
//! written.

mod arcs;
mod entries;
mod error;
mod header;
mod number;
mod passes;
mod pierce;
mod profile;
mod program;
mod refusals;
mod safety;
mod setup;
mod writer;

pub use arcs::{MAX_SPLITS, RADIUS_MARGIN};
pub use error::PostError;
pub use header::CYCLE_TIME_PLACEHOLDER;
pub use number::format_number;
pub(crate) use profile::format_limit;
pub use profile::{
    ArcForm, CommentStyle, Cutter, DwellUnit, MAX_DECIMALS, MM_PER_INCH, MachineKind,
    MachineProfile, Process, ProgramUnits, Spindle, TravelEnvelope, radius_rule,
};
pub use program::write_program;
pub use refusals::edges_in_travel;
pub use safety::{PRECEDENCE, SAFETY_HEADING, cautions};
pub use setup::{ProgramSettings, WorkOffset, pass_depths};
pub use writer::sanitize;
