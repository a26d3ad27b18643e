//! The demo part: a truss bracket plate, drawn by code so that the drawing in `demo-parts/`
//! can be checked and regenerated.
//!
//! # The scenario (invented for the demo)
//!
//! A side bracket for a light gantry: a plate of 3 mm aluminium, 240 × 140 mm with 10 mm
//! corner radii, bolted on through four Ø9 mm holes (for M8 bolts) 15 mm in from each edge. Its
//! middle is a row of four four-sided bays between slanted struts; each bay gets an elliptical
//! lightening hole, the largest ellipse tangent to the bay's sides after a 4 mm edge margin, cut
//! with a 6 mm end mill in one pass [`CUT_DEPTH`] deep: through the plate and 0.5 mm into a
//! sacrificial board (0.58 of the cutter's diameter; full-width slotting in aluminium is commonly
//! run at 0.5 to 1 diameter, common practice, docs/sources.md P4.3). The struts are 9.9 mm wide between neighbouring bays, the top and
//! bottom flanges at least 24 mm.
//!
//! | layer | holds |
//! |---|---|
//! | [`OUTLINE_LAYER`] `PLATE-EDGE` | the outline: one closed LWPOLYLINE, straight sides and four 90° corner arcs as bulges |
//! | [`crate::chain::DEFAULT_BAY_LAYER`] `OPENING-BAYS` | the four bays (corners below, counter-clockwise from the lowest) |
//! | [`HOLES_LAYER`] `BOLT-HOLES` | four CIRCLEs, radius 4.5 mm, centres (15, 15), (225, 15), (225, 125), (15, 125) |
//!
//! | bay | shape | corners (mm) | drawn as |
//! |---|---|---|---|
//! | bay 1 | irregular convex quadrilateral | (70, 28), (58, 112), (26, 104), (24, 38) | closed LWPOLYLINE, counter-clockwise |
//! | bay 2 | isosceles trapezoid, narrow side down | (80, 28), (112, 28), (124, 112), (68, 112) | four LINEs |
//! | bay 3 | parallelogram | (122, 28), (162, 28), (174, 112), (134, 112) | closed LWPOLYLINE, drawn clockwise |
//! | bay 4 | irregular convex quadrilateral | (172, 28), (216, 40), (214, 104), (184, 112) | four LINEs |
//!
//! Rough check of the cut (closed-form largest inellipse of the bay moved in by 4 mm, computed
//! by the designer while laying the bays out, not by this crate): the semi-axes come to about
//! 33 × 15, 38 × 17, 38 × 16 and 33 × 14 mm, so the smallest radius of curvature b²/a is about
//! 6.9, 7.7, 6.5 and 6.0 mm, all at least twice the 3 mm radius of the end mill.
//!
//! # Determinism
//!
//! The DXF library stamps creation and update times from the clock and random GUIDs into the
//! header. [`demo_drawing`] sets the GUIDs to nil, and [`demo_dxf_bytes`] replaces the four time
//! stamps with a fixed date, so the bytes depend only on this code. Handles are given in the
//! order the entities are added.

pub mod sheet;

use dxf::entities::{Circle, Entity, EntityType, Line, LwPolyline};
use dxf::enums::{AcadVersion, Units};
use dxf::tables::Layer;
use dxf::{Color, LwPolylineVertex};

/// The layer of the plate's outline.
pub const OUTLINE_LAYER: &str = "PLATE-EDGE";
/// The layer of the bolt holes.
pub const HOLES_LAYER: &str = "BOLT-HOLES";
/// Plate size (mm).
pub const PLATE_WIDTH: f64 = 240.0;
pub const PLATE_HEIGHT: f64 = 140.0;
/// Plate thickness (mm).
pub const PLATE_THICKNESS: f64 = 3.0;
/// Depth the demo cuts to (mm): through the plate and 0.5 mm into the board under it.
pub const CUT_DEPTH: f64 = PLATE_THICKNESS + 0.5;
/// Corner radius of the plate (mm).
pub const CORNER_RADIUS: f64 = 10.0;
/// Bolt-hole radius (mm) and centres.
pub const BOLT_HOLE_RADIUS: f64 = 4.5;
pub const BOLT_HOLE_CENTRES: [(f64, f64); 4] =
    [(15.0, 15.0), (225.0, 15.0), (225.0, 125.0), (15.0, 125.0)];

/// The bays' corners, counter-clockwise, each starting from its lowest corner (the leftmost of
/// equally low ones), as `build_part` returns them.
pub const BAYS: [[(f64, f64); 4]; 4] = [
    [(70.0, 28.0), (58.0, 112.0), (26.0, 104.0), (24.0, 38.0)],
    [(80.0, 28.0), (112.0, 28.0), (124.0, 112.0), (68.0, 112.0)],
    [(122.0, 28.0), (162.0, 28.0), (174.0, 112.0), (134.0, 112.0)],
    [(172.0, 28.0), (216.0, 40.0), (214.0, 104.0), (184.0, 112.0)],
];

/// The fixed Julian date written for the header's time stamps: 2024-01-01 00:00 UTC.
const FIXED_JULIAN_DATE: &str = "2460310.5";
const FIXED_JULIAN_DATE_CR: &str = "2460310.5\r";

/// The demo part as a `dxf` drawing (R2000, `$INSUNITS` millimetres).
pub fn demo_drawing() -> dxf::Drawing {
    let mut d = dxf::Drawing::new();
    // R12 would silently drop LWPOLYLINE and $INSUNITS (CRATES.md §2, gotcha 1).
    d.header.version = AcadVersion::R2000;
    d.header.default_drawing_units = Units::Millimeters;
    d.header.fingerprint_guid = Default::default();
    d.header.version_guid = Default::default();
    let bay_layer = crate::chain::DEFAULT_BAY_LAYER;
    for (name, colour) in [(OUTLINE_LAYER, 7), (bay_layer, 3), (HOLES_LAYER, 1)] {
        d.add_layer(Layer {
            name: name.into(),
            color: Color::from_index(colour),
            ..Default::default()
        });
    }

    // Outline: counter-clockwise, each rounded corner a quarter circle (bulge tan(90°/4)).
    let (w, h, r) = (PLATE_WIDTH, PLATE_HEIGHT, CORNER_RADIUS);
    let q = (std::f64::consts::FRAC_PI_2 / 4.0).tan();
    let outline = [
        (r, 0.0, 0.0),
        (w - r, 0.0, q),
        (w, r, 0.0),
        (w, h - r, q),
        (w - r, h, 0.0),
        (r, h, q),
        (0.0, h - r, 0.0),
        (0.0, r, q),
    ];
    add(&mut d, OUTLINE_LAYER, lwpolyline(&outline));

    let corners = |i: usize| BAYS[i].map(|(x, y)| (x, y, 0.0));
    // bay 1: closed LWPOLYLINE, counter-clockwise.
    add(&mut d, bay_layer, lwpolyline(&corners(0)));
    // bay 2: four LINEs.
    for l in lines(&BAYS[1]) {
        add(&mut d, bay_layer, l);
    }
    // bay 3: closed LWPOLYLINE drawn clockwise.
    let mut cw = corners(2);
    cw.reverse();
    add(&mut d, bay_layer, lwpolyline(&cw));
    // bay 4: four LINEs.
    for l in lines(&BAYS[3]) {
        add(&mut d, bay_layer, l);
    }

    for (x, y) in BOLT_HOLE_CENTRES {
        let c = Circle::new(dxf::Point::new(x, y, 0.0), BOLT_HOLE_RADIUS);
        add(&mut d, HOLES_LAYER, EntityType::Circle(c));
    }
    d
}

/// The demo part as the bytes of an ASCII DXF file, the same on every run and machine.
pub fn demo_dxf_bytes() -> Vec<u8> {
    let mut out = Vec::new();
    if let Err(e) = demo_drawing().save(&mut out) {
        // Writing to a Vec cannot fail for I/O reasons; anything else is a bug here.
        unreachable!("writing the demo drawing to memory failed: {e}");
    }
    fix_time_stamps(&out)
}

/// Replaces the values of `$TDCREATE`, `$TDUCREATE`, `$TDUPDATE` and `$TDUUPDATE` with
/// [`FIXED_JULIAN_DATE`].
fn fix_time_stamps(bytes: &[u8]) -> Vec<u8> {
    let text = String::from_utf8_lossy(bytes);
    let mut lines: Vec<&str> = text.split('\n').collect();
    let stamps = ["$TDCREATE", "$TDUCREATE", "$TDUPDATE", "$TDUUPDATE"];
    let mut i = 0;
    while i + 2 < lines.len() {
        if stamps.contains(&lines[i].trim()) && lines[i + 1].trim() == "40" {
            lines[i + 2] = if lines[i + 2].ends_with('\r') {
                FIXED_JULIAN_DATE_CR
            } else {
                FIXED_JULIAN_DATE
            };
        }
        i += 1;
    }
    lines.join("\n").into_bytes()
}

fn add(d: &mut dxf::Drawing, layer: &str, specific: EntityType) {
    let mut e = Entity::new(specific);
    e.common.layer = layer.into();
    d.add_entity(e);
}

fn lwpolyline(vertices: &[(f64, f64, f64)]) -> EntityType {
    let mut p = LwPolyline::default();
    p.set_is_closed(true);
    p.vertices = vertices
        .iter()
        .map(|&(x, y, bulge)| LwPolylineVertex {
            x,
            y,
            bulge,
            ..Default::default()
        })
        .collect();
    EntityType::LwPolyline(p)
}

fn lines(corners: &[(f64, f64); 4]) -> Vec<EntityType> {
    (0..4)
        .map(|i| {
            let (a, b) = (corners[i], corners[(i + 1) % 4]);
            EntityType::Line(Line::new(
                dxf::Point::new(a.0, a.1, 0.0),
                dxf::Point::new(b.0, b.1, 0.0),
            ))
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bytes_are_reproducible_and_r2000_in_mm() {
        let a = demo_dxf_bytes();
        assert_eq!(a, demo_dxf_bytes());
        let text = String::from_utf8(a).unwrap();
        assert!(text.contains("$ACADVER"));
        assert!(
            text.contains("AC1015"),
            "R2000 is AC1015 (DXF reference, HEADER)"
        );
        assert!(text.contains(FIXED_JULIAN_DATE));
        let back = dxf::Drawing::load(&mut text.as_bytes()).unwrap();
        assert_eq!(back.header.default_drawing_units, Units::Millimeters);
        // 1 outline + 2 polyline bays + 8 lines + 4 circles.
        assert_eq!(back.entities().count(), 15);
    }

    #[test]
    fn bays_are_convex_counter_clockwise_and_inside_the_plate_with_web() {
        for bay in BAYS {
            for i in 0..4 {
                let (a, b, c) = (bay[i], bay[(i + 1) % 4], bay[(i + 2) % 4]);
                let turn = (b.0 - a.0) * (c.1 - b.1) - (b.1 - a.1) * (c.0 - b.0);
                assert!(turn > 0.0, "{bay:?} turns clockwise at {b:?}");
                assert!(b.0 >= 20.0 && b.0 <= PLATE_WIDTH - 20.0);
                assert!(b.1 >= 20.0 && b.1 <= PLATE_HEIGHT - 20.0);
            }
        }
    }
}
