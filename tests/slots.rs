//! Holes whose pieces are half circles, or arcs of about half a turn, cut on every kind of
//! machine: an obround slot drawn as LINE + ARC and as a closed LWPOLYLINE with bulge-1 ends, a
//! circle drawn as two half circles, and arcs of 179.9°, 180°, 180.1° and 359.9° closed by their
//! chords. Such holes were once refused at any tool size ("no room for a lead-in"): the centre
//! of a half circle lies on its chord, where the inside test of a contour could not decide.
//!
//! Drawings are written by the outside `dxf` crate (R2000, mm); programs are read back by the
//! outside `gcode` crate (tests/support/gcode_read.rs). Every contour point must lie at the tool
//! radius (or half the kerf) inside its drawn hole, measured here against the drawn geometry by
//! the test's own distance functions, to the tolerance (0.01 mm) plus the read-back's f32
//! precision (1e-4 mm).

#[path = "support/gcode_read.rs"]
mod gcode_read;

use assert_cmd::Command;
use dxf::LwPolylineVertex;
use dxf::entities::{Arc, Entity, EntityType, Line, LwPolyline};
use dxf::enums::AcadVersion;
use gcode_read::{marked_moves, read_back};
use std::f64::consts::TAU;
use std::fs;

type P = (f64, f64);

fn entity(kind: EntityType, layer: &str) -> Entity {
    let mut e = Entity::new(kind);
    e.common.layer = layer.into();
    e
}

fn line(a: P, b: P) -> Entity {
    entity(
        EntityType::Line(Line::new(
            dxf::Point::new(a.0, a.1, 0.0),
            dxf::Point::new(b.0, b.1, 0.0),
        )),
        "HOLES",
    )
}

/// A DXF ARC: counter-clockwise from `from` to `to` degrees.
fn arc(c: P, r: f64, from: f64, to: f64) -> Entity {
    entity(
        EntityType::Arc(Arc::new(dxf::Point::new(c.0, c.1, 0.0), r, from, to)),
        "HOLES",
    )
}

/// One drawn hole, as the test measures it: its boundary's distance from a point.
enum Hole {
    /// Points within `r` of the segment `a`–`b`.
    Slot {
        a: P,
        b: P,
        r: f64,
    },
    Circle {
        c: P,
        r: f64,
    },
    /// The disc about `c` of radius `r` cut by the chord of the arc from `from` sweeping `sweep`
    /// (radians, counter-clockwise), on the arc's side.
    ArcChord {
        c: P,
        r: f64,
        from: f64,
        sweep: f64,
    },
}

fn dist(p: P, q: P) -> f64 {
    (p.0 - q.0).hypot(p.1 - q.1)
}

fn segment_distance(p: P, a: P, b: P) -> f64 {
    let (dx, dy) = (b.0 - a.0, b.1 - a.1);
    let t = (((p.0 - a.0) * dx + (p.1 - a.1) * dy) / (dx * dx + dy * dy)).clamp(0.0, 1.0);
    dist(p, (a.0 + t * dx, a.1 + t * dy))
}

impl Hole {
    /// The distance from `p` to the hole's drawn boundary.
    fn boundary_distance(&self, p: P) -> f64 {
        match *self {
            Hole::Slot { a, b, r } => (segment_distance(p, a, b) - r).abs(),
            Hole::Circle { c, r } => (dist(p, c) - r).abs(),
            Hole::ArcChord { c, r, from, sweep } => {
                let at = |ang: f64| (c.0 + r * ang.cos(), c.1 + r * ang.sin());
                let (s, e) = (at(from), at(from + sweep));
                let rel = ((p.1 - c.1).atan2(p.0 - c.0) - from).rem_euclid(TAU);
                let to_arc = if rel <= sweep {
                    (dist(p, c) - r).abs()
                } else {
                    dist(p, s).min(dist(p, e))
                };
                to_arc.min(segment_distance(p, s, e))
            }
        }
    }

    fn centre(&self) -> P {
        match *self {
            Hole::Slot { a, b, .. } => (0.5 * (a.0 + b.0), 0.5 * (a.1 + b.1)),
            Hole::Circle { c, .. } => c,
            Hole::ArcChord { c, r, from, sweep } => {
                let m = from + 0.5 * sweep;
                (c.0 + 0.5 * r * m.cos(), c.1 + 0.5 * r * m.sin())
            }
        }
    }
}

/// A 350 × 190 plate with the holes of the module docs; the holes as the test measures them.
fn drawing() -> (dxf::Drawing, Vec<Hole>) {
    let mut d = dxf::Drawing::new();
    d.header.version = AcadVersion::R2000;
    d.header.default_drawing_units = dxf::enums::Units::Millimeters;
    let plate = [(0.0, 0.0), (350.0, 0.0), (350.0, 190.0), (0.0, 190.0)];
    for i in 0..4 {
        let mut e = line(plate[i], plate[(i + 1) % 4]);
        e.common.layer = "PLATE".into();
        d.add_entity(e);
    }
    let mut holes = Vec::new();
    // A slot of LINEs and half-circle ARCs.
    let (a, b, r) = ((40.0, 50.0), (100.0, 50.0), 8.0);
    d.add_entity(line((a.0, a.1 - r), (b.0, b.1 - r)));
    d.add_entity(arc(b, r, 270.0, 90.0));
    d.add_entity(line((b.0, b.1 + r), (a.0, a.1 + r)));
    d.add_entity(arc(a, r, 90.0, 270.0));
    holes.push(Hole::Slot { a, b, r });
    // The same slot as a closed LWPOLYLINE: bulge 1 is a half circle turning counter-clockwise.
    let (a, b) = ((40.0, 140.0), (100.0, 140.0));
    let mut p = LwPolyline::default();
    p.set_is_closed(true);
    for (x, y, bulge) in [
        (a.0, a.1 - r, 0.0),
        (b.0, b.1 - r, 1.0),
        (b.0, b.1 + r, 0.0),
        (a.0, a.1 + r, 1.0),
    ] {
        p.vertices.push(LwPolylineVertex {
            x,
            y,
            bulge,
            ..Default::default()
        });
    }
    d.add_entity(entity(EntityType::LwPolyline(p), "HOLES"));
    holes.push(Hole::Slot { a, b, r });
    // A circle of two half circles.
    let c = (160.0, 50.0);
    d.add_entity(arc(c, 10.0, 0.0, 180.0));
    d.add_entity(arc(c, 10.0, 180.0, 360.0));
    holes.push(Hole::Circle { c, r: 10.0 });
    // Arcs about half a turn and nearly a whole turn, closed by their chords.
    for (k, sweep) in [179.9, 180.0, 180.1, 359.9_f64].into_iter().enumerate() {
        let c = (
            200.0 + 50.0 * (k % 3) as f64,
            if k < 3 { 50.0 } else { 140.0 },
        );
        let from = 30.0;
        d.add_entity(arc(c, 15.0, from, from + sweep));
        let at = |deg: f64| {
            let t = deg.to_radians();
            (c.0 + 15.0 * t.cos(), c.1 + 15.0 * t.sin())
        };
        d.add_entity(line(at(from + sweep), at(from)));
        holes.push(Hole::ArcChord {
            c,
            r: 15.0,
            from: from.to_radians(),
            sweep: sweep.to_radians(),
        });
    }
    (d, holes)
}

/// The point of an arc move halfway along it.
fn arc_middle(from: [f64; 3], to: [f64; 3], centre: [f64; 2], ccw: bool) -> P {
    let a0 = (from[1] - centre[1]).atan2(from[0] - centre[0]);
    let a1 = (to[1] - centre[1]).atan2(to[0] - centre[0]);
    let mut sweep = if ccw { a1 - a0 } else { a0 - a1 }.rem_euclid(TAU);
    if sweep == 0.0 {
        sweep = TAU;
    }
    let mid = a0 + if ccw { 0.5 * sweep } else { -0.5 * sweep };
    let r = (from[0] - centre[0]).hypot(from[1] - centre[1]);
    (centre[0] + r * mid.cos(), centre[1] + r * mid.sin())
}

#[test]
fn half_circle_holes_are_cut_on_every_kind_at_the_tool_radius() {
    let dir = tempfile::tempdir().unwrap();
    let (d, holes) = drawing();
    d.save_file(dir.path().join("slots.dxf")).unwrap();
    let root = env!("CARGO_MANIFEST_DIR");
    // Mills and routers with a 3 mm cutter; the others with their profile's kerf.
    for (profile, tool) in [
        ("metric-mill", Some(3.0)),
        ("inch-router", Some(3.0)),
        ("laser", None),
        ("plasma", None),
        ("waterjet", None),
    ] {
        let machine = format!("{root}/machine-profiles/{profile}.toml");
        let out = format!("out-{profile}");
        let mut args = vec!["plan", "slots.dxf", "--machine", &machine, "--out", &out];
        let tool_text = tool.map(|t: f64| t.to_string());
        if let Some(t) = &tool_text {
            args.extend(["--tool-diameter", t]);
        }
        conicut()
            .current_dir(dir.path())
            .args(&args)
            .assert()
            .success();
        let report: serde_json::Value = serde_json::from_str(
            &fs::read_to_string(dir.path().join(format!("{out}/slots-report.json"))).unwrap(),
        )
        .unwrap();
        let width = report["tool_diameter_mm"].as_f64().unwrap();
        let program = fs::read_to_string(dir.path().join(format!("{out}/slots.nc"))).unwrap();
        let read = read_back(&program);
        let hole_names: Vec<String> = read
            .features
            .iter()
            .map(|(n, _)| n.clone())
            .filter(|n| n.starts_with("hole"))
            .collect();
        assert_eq!(hole_names.len(), holes.len(), "{profile}: {hole_names:?}");
        for name in &hole_names {
            let moves = marked_moves(&read, name, "contour");
            assert!(!moves.is_empty(), "{profile} {name}: a contour");
            let mut points = Vec::new();
            for m in moves.iter().map(|&i| &read.moves[i]) {
                points.push((m.to[0], m.to[1]));
                if let Some((centre, ccw)) = m.arc {
                    points.push(arc_middle(m.from, m.to, centre, ccw));
                }
            }
            // The drawn hole this contour runs in: the one whose centre is nearest its points'.
            let n = points.len() as f64;
            let mean = (
                points.iter().map(|p| p.0).sum::<f64>() / n,
                points.iter().map(|p| p.1).sum::<f64>() / n,
            );
            let hole = holes
                .iter()
                .min_by(|a, b| dist(a.centre(), mean).total_cmp(&dist(b.centre(), mean)))
                .unwrap();
            for p in points {
                let d = hole.boundary_distance(p);
                assert!(
                    (d - 0.5 * width).abs() <= 0.01 + 1e-4,
                    "{profile} {name}: {p:?} is {d} from the drawn edge, not {}",
                    0.5 * width
                );
            }
        }
        // The half circles are written as arcs (G2/G3), not flattened.
        assert!(read.moves.iter().any(|m| m.arc.is_some()), "{profile}");
    }
}

fn conicut() -> Command {
    Command::cargo_bin("conicut").expect("the conicut binary is built")
}
