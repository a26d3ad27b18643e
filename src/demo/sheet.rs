//! Generated sheets for scale tests and benchmarks: a plate with any number of bays of varied
//! shape and round fixing holes between them.
//!
//! # The scenario (invented)
//!
//! A perforated screen panel for a ventilation housing: 2 mm sheet cut on a laser, plasma table
//! or waterjet, with rows of elliptical openings, one in each bay drawn on `OPENING-BAYS`, and a
//! Ø4 mm fixing hole beside every third bay. The bays sit on a square pitch of [`PITCH`] mm; each
//! is a triangle or quadrilateral whose corners lie on a circle at jittered angles (such a
//! polygon is always convex), or a regular pentagon, then stretched and turned (which keeps it
//! convex, and a pentagon's five-tangent ellipse inside it), so that no two bays are alike. A
//! seed makes the drawing repeatable.
//!
//! The text is an ASCII DXF of LINEs and CIRCLEs only (it reads the same in every DXF version),
//! with `$INSUNITS` 4 (millimetres). The outline is a rectangle on [`super::OUTLINE_LAYER`] and
//! the holes are on [`super::HOLES_LAYER`].

use super::{HOLES_LAYER, OUTLINE_LAYER};
use crate::chain::DEFAULT_BAY_LAYER;
use crate::geom::random::XorShift;
use std::f64::consts::TAU;
use std::fmt::Write;

/// Distance between neighbouring bay centres (mm).
pub const PITCH: f64 = 40.0;

/// The margin round the bays to the plate's edge (mm).
pub const BORDER: f64 = 20.0;

/// A drawing's size: bays per row and rows.
pub fn grid_of(bays: usize) -> (usize, usize) {
    let columns = (bays as f64).sqrt().ceil().max(1.0) as usize;
    let rows = bays.div_ceil(columns).max(1);
    (columns, rows)
}

/// The plate's width and height (mm) for `bays` bays.
pub fn plate_size(bays: usize) -> (f64, f64) {
    let (columns, rows) = grid_of(bays);
    (
        columns as f64 * PITCH + 2.0 * BORDER,
        rows as f64 * PITCH + 2.0 * BORDER,
    )
}

/// The DXF text of a sheet of `bays` bays (see the module docs), repeatable for a `seed`.
pub fn sheet_dxf(bays: usize, seed: u64) -> String {
    let mut out = String::with_capacity(400 * bays + 2000);
    out.push_str("0\nSECTION\n2\nHEADER\n9\n$INSUNITS\n70\n4\n0\nENDSEC\n");
    out.push_str("0\nSECTION\n2\nENTITIES\n");
    let (w, h) = plate_size(bays);
    let corners = [(0.0, 0.0), (w, 0.0), (w, h), (0.0, h)];
    for i in 0..4 {
        line(&mut out, OUTLINE_LAYER, corners[i], corners[(i + 1) % 4]);
    }
    let (columns, _) = grid_of(bays);
    let mut random = XorShift::new(seed);
    for k in 0..bays {
        let (col, row) = (k % columns, k / columns);
        let cx = BORDER + (col as f64 + 0.5) * PITCH;
        let cy = BORDER + (row as f64 + 0.5) * PITCH;
        let polygon = bay_corners(&mut random, cx, cy);
        for i in 0..polygon.len() {
            let next = polygon[(i + 1) % polygon.len()];
            line(&mut out, DEFAULT_BAY_LAYER, polygon[i], next);
        }
        if k % 3 == 0 {
            // In the corner of the cell, clear of the bay (which stays within 15 mm of its
            // centre) by more than 5 mm.
            circle(&mut out, cx + 0.45 * PITCH, cy + 0.45 * PITCH, 2.0);
        }
    }
    out.push_str("0\nENDSEC\n0\nEOF\n");
    out
}

/// A convex polygon of 3 to 5 corners about `(cx, cy)`, within 15 mm of it, counter-clockwise.
fn bay_corners(random: &mut XorShift, cx: f64, cy: f64) -> Vec<(f64, f64)> {
    let sides = 3 + (random.next_f64() * 3.0) as usize % 3;
    let radius = 11.0 + 2.0 * random.next_f64();
    let turn = TAU * random.next_f64();
    let (sx, sy) = (0.9 + 0.2 * random.next_f64(), 0.9 + 0.2 * random.next_f64());
    let step = TAU / sides as f64;
    (0..sides)
        .map(|i| {
            // Pentagons stay affine images of the regular one: the one ellipse touching all five
            // side lines is then the image of the incircle, inside the bay. Triangles and
            // quadrilaterals get jittered corners (their largest inscribed ellipse is inside).
            let jitter = if sides == 5 { 0.0 } else { 0.25 };
            let t = i as f64 * step + jitter * step * (random.next_f64() - 0.5);
            let (x, y) = (radius * sx * t.cos(), radius * sy * t.sin());
            let (s, c) = turn.sin_cos();
            (cx + c * x - s * y, cy + s * x + c * y)
        })
        .collect()
}

fn line(out: &mut String, layer: &str, a: (f64, f64), b: (f64, f64)) {
    let _ = write!(
        out,
        "0\nLINE\n8\n{layer}\n10\n{:.6}\n20\n{:.6}\n30\n0.0\n11\n{:.6}\n21\n{:.6}\n31\n0.0\n",
        a.0, a.1, b.0, b.1
    );
}

fn circle(out: &mut String, x: f64, y: f64, r: f64) {
    let _ = write!(
        out,
        "0\nCIRCLE\n8\n{HOLES_LAYER}\n10\n{x:.6}\n20\n{y:.6}\n30\n0.0\n40\n{r:.6}\n"
    );
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sheets_read_and_chain_into_the_bays_and_holes_asked_for() {
        let text = sheet_dxf(50, 7);
        assert_eq!(text, sheet_dxf(50, 7), "repeatable");
        assert_ne!(text, sheet_dxf(50, 8), "the seed matters");
        let opts = crate::read::ReadOptions {
            file_name: "sheet.dxf",
            units: None,
        };
        let drawing = crate::read::read_dxf(text.as_bytes(), &opts).unwrap();
        let part = crate::chain::build_part(&drawing, &Default::default()).unwrap();
        assert_eq!(part.bays.len(), 50);
        assert_eq!(part.holes.len(), 17, "every third bay has a fixing hole");
        assert!(part.outline.is_some());
        let sides: std::collections::BTreeSet<usize> =
            part.bays.iter().map(|b| b.corners().len()).collect();
        assert_eq!(sides, [3, 4, 5].into_iter().collect(), "varied shapes");
    }
}
