//! conicut: solve elliptical features from a part drawing and write a checked CNC program.
//!
//! The crate is a pipeline of pure stages, each in its own module and each depending only on the
//! ones before it (see `DEVELOPERS.md`):
//!
//! ```text
//! DXF bytes ─read─▶ entities ─chain─▶ contours, bays ─solve─▶ ellipses ─plan─▶ exact tool paths
//!   ─fit─▶ lines within tolerance ─post─▶ G-code      ─preview─▶ SVG      ─report─▶ text, JSON
//! ```
//!
//! # Tolerance
//!
//! "Tolerance" means one thing everywhere: the largest distance, in millimetres, between the
//! path we emit and the exact curve it stands for, in either direction.

#![forbid(unsafe_code)]

pub mod chain;
pub mod check;
pub mod demo;
pub mod fit;
pub mod geom;
pub mod pipeline;
pub mod plan;
pub mod post;
pub mod preview;
pub mod read;
pub mod report;
pub mod settings;
pub mod solve;
