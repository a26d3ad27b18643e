//! Why a file could not be read.

use super::Units;

/// Why a file could not be read. Every message names the file and says what to do.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ReadError {
    #[error(
        "{file}: this is a binary DXF (or DXB) file; conicut reads ASCII DXF only. Save the \
         drawing again as an ASCII (text) DXF, version R12 or 2000 or later"
    )]
    Binary { file: String },
    #[error(
        "{file}: this does not look like an ASCII DXF drawing ({reason}). Check that it is the \
         right file, exported from the CAD program as ASCII DXF"
    )]
    NotDxf { file: String, reason: String },
    #[error("{file}{}: the DXF could not be read: {message}. Look at the file near that place, or export it again from the CAD program", line.map(|l| format!(", line {l}")).unwrap_or_default())]
    Load {
        file: String,
        /// The line (for text files) the DXF library points at.
        line: Option<usize>,
        message: String,
    },
    /// The DXF library stopped with a panic (contained here; see `read::library_panicking`).
    #[error(
        "{file}: the DXF library could not read this file (it stopped with: {message}). \
         Open the drawing in the CAD program and save it again, perhaps as another DXF version; \
         if that does not help, please report it with the drawing"
    )]
    LibraryPanic { file: String, message: String },
    #[error(
        "{file}, line {line}: group code {code} of {what} should hold a finite number but holds \
         '{value}'. Correct the value in the CAD program and export again"
    )]
    BadNumber {
        file: String,
        line: usize,
        code: i32,
        value: String,
        what: String,
    },
    #[error(
        "{file}, line {line}: the DXF library did not load {what} (or lost some of its \
         vertices), although the file holds it: some value in it could not be read. Check that \
         entity in the file, or export the drawing again (ASCII DXF, R12 or 2000 or later)"
    )]
    EntityLost {
        file: String,
        line: usize,
        what: String,
    },
    #[error(
        "{file}: the DXF library loaded {loaded} entities but the ENTITIES section holds \
         {counted}; the file's structure is unusual and something may be lost. Export the \
         drawing again from the CAD program"
    )]
    CountMismatch {
        file: String,
        loaded: usize,
        counted: usize,
    },
    #[error(
        "{file}: the drawing does not say what units it is in ({why}). Pass --units mm or \
         --units in to say which; nothing is guessed"
    )]
    NoUnits {
        file: String,
        /// Why not, in words: an R12 file has no units field at all.
        why: String,
    },
    #[error(
        "{file}: the drawing's header says its units are {header} ($INSUNITS) but --units says \
         {flag}. Find out which is right: drop --units to use the header's unit, or correct \
         $INSUNITS (the drawing units) in the CAD program"
    )]
    UnitsDisagree {
        file: String,
        header: Units,
        flag: Units,
    },
    #[error(
        "{file}: the drawing's header gives its units as {name} ($INSUNITS = {code}); conicut \
         reads drawings in mm, cm, m, in or ft. Rescale the drawing to millimetres or inches in \
         the CAD program"
    )]
    UnsupportedUnits {
        file: String,
        code: i64,
        name: String,
    },
    #[error(
        "{file}: {what} has extrusion direction ({}, {}, {}), which is not ±Z, so it does not \
         lie in the XY plane. conicut reads flat drawings: rotate the entity into the XY plane \
         (or flatten the drawing) and export again", normal[0], normal[1], normal[2]
    )]
    NotFlat {
        file: String,
        what: String,
        normal: [f64; 3],
    },
    #[error("{file}: {what}: {reason}")]
    BadGeometry {
        file: String,
        what: String,
        reason: String,
    },
}
