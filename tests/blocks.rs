//! Blocks: INSERTs expanded with translation, rotation, uniform, unequal and mirrored scale,
//! nesting and column/row arrays, in drawings written by the outside `dxf` crate (R2000, mm).
//! A bay drawn inside a block is solved and cut like any other; a circle under unequal scale
//! is cut as the ellipse it becomes.
//!
//! Reference values: a rectangle bay of w × h gets the ellipse of semi-axes w/2, h/2 at its
//! centre, turned with it (docs/sources.md M2: the largest ellipse tangent to a parallelogram's
//! sides touches their midpoints, π/4 of its area). A circle of radius r under the scales
//! (sx, sy) is the ellipse of semi-axes |sx|·r and |sy|·r along the block's turned axes (an
//! affine map takes conjugate semi-diameters to conjugate semi-diameters; these stay
//! perpendicular). The INSERT placement rule (location + R·S·(p − base), arrays along the
//! turned axes) is the DXF reference's for INSERT groups 10, 41–44, 50, 70, 71.

#[path = "support/gcode_read.rs"]
mod gcode_read;

use assert_cmd::Command;
use dxf::entities::{Circle, Entity, EntityType, Insert, Line, LwPolyline};
use dxf::{Block, LwPolylineVertex};
use gcode_read::{marked_moves, read_back};
use std::fs;
use std::path::Path;

fn conicut() -> Command {
    Command::cargo_bin("conicut").expect("the conicut binary is built")
}

fn laser() -> String {
    format!("{}/machine-profiles/laser.toml", env!("CARGO_MANIFEST_DIR"))
}

fn on(layer: &str, kind: EntityType) -> Entity {
    let mut e = Entity::new(kind);
    e.common.layer = layer.into();
    e
}

fn line(layer: &str, a: (f64, f64), b: (f64, f64)) -> Entity {
    on(
        layer,
        EntityType::Line(Line::new(
            dxf::Point::new(a.0, a.1, 0.0),
            dxf::Point::new(b.0, b.1, 0.0),
        )),
    )
}

fn insert(layer: &str, name: &str, at: (f64, f64), rot: f64, sx: f64, sy: f64) -> Entity {
    on(
        layer,
        EntityType::Insert(Insert {
            name: name.into(),
            location: dxf::Point::new(at.0, at.1, 0.0),
            rotation: rot,
            x_scale_factor: sx,
            y_scale_factor: sy,
            ..Default::default()
        }),
    )
}

fn block(name: &str, base: (f64, f64), entities: Vec<Entity>) -> Block {
    Block {
        name: name.into(),
        base_point: dxf::Point::new(base.0, base.1, 0.0),
        entities,
        ..Default::default()
    }
}

fn new_drawing() -> dxf::Drawing {
    let mut d = dxf::Drawing::new();
    d.header.version = dxf::enums::AcadVersion::R2000;
    d.header.default_drawing_units = dxf::enums::Units::Millimeters;
    let plate = [(0.0, 0.0), (400.0, 0.0), (400.0, 200.0), (0.0, 200.0)];
    for i in 0..4 {
        d.add_entity(line("PLATE", plate[i], plate[(i + 1) % 4]));
    }
    d
}

/// Plans `d` on the laser and returns the report.
fn plan(dir: &Path, d: &dxf::Drawing) -> serde_json::Value {
    d.save_file(dir.join("b.dxf")).unwrap();
    conicut()
        .current_dir(dir)
        .args(["plan", "b.dxf", "--machine", &laser(), "--out", "out"])
        .assert()
        .success();
    serde_json::from_str(&fs::read_to_string(dir.join("out/b-report.json")).unwrap()).unwrap()
}

fn features(report: &serde_json::Value) -> &Vec<serde_json::Value> {
    report["features"].as_array().unwrap()
}

fn f(v: &serde_json::Value) -> f64 {
    v.as_f64().unwrap()
}

fn near(a: f64, b: f64) -> bool {
    (a - b).abs() < 1e-9
}

#[test]
fn a_bay_in_a_turned_block_is_solved_and_cut() {
    let dir = tempfile::tempdir().unwrap();
    let mut d = new_drawing();
    // A 40 × 20 rectangle about the block's base point (the origin), on layer 0: it takes the
    // INSERT's layer, the bay layer. Placed at (100, 80), turned 30°.
    let r = [(-20.0, -10.0), (20.0, -10.0), (20.0, 10.0), (-20.0, 10.0)];
    let sides = (0..4).map(|i| line("0", r[i], r[(i + 1) % 4])).collect();
    d.add_block(block("VENT BAY", (0.0, 0.0), sides));
    d.add_entity(insert(
        "OPENING-BAYS",
        "VENT BAY",
        (100.0, 80.0),
        30.0,
        1.0,
        1.0,
    ));
    let report = plan(dir.path(), &d);
    let bay = features(&report)
        .iter()
        .find(|x| x["name"] == "bay 1")
        .expect("the bay inside the block is cut");
    let e = &bay["ellipse"];
    assert!(
        near(f(&e["semi_major_mm"]), 20.0) && near(f(&e["semi_minor_mm"]), 10.0),
        "{e}"
    );
    assert!(near(f(&e["angle_deg"]), 30.0), "{e}");
    assert!(near(f(&e["center_mm"][0]), 100.0) && near(f(&e["center_mm"][1]), 80.0));
}

#[test]
fn nested_arrayed_mirrored_and_unequally_scaled_blocks_land_where_the_rule_puts_them() {
    let dir = tempfile::tempdir().unwrap();
    let mut d = new_drawing();
    let circle = |r: f64| {
        on(
            "0",
            EntityType::Circle(Circle::new(dxf::Point::new(0.0, 0.0, 0.0), r)),
        )
    };
    d.add_block(block("HOLE", (0.0, 0.0), vec![circle(4.0)]));
    // PAIR: two HOLEs 20 mm either side of its base point (5, 0).
    d.add_block(block(
        "PAIR",
        (5.0, 0.0),
        vec![
            insert("0", "HOLE", (-15.0, 0.0), 0.0, 1.0, 1.0),
            insert("0", "HOLE", (25.0, 0.0), 0.0, 1.0, 1.0),
        ],
    ));
    // Nested at scale 2 about (60, 150): circles of radius 8 at (20, 150) and (100, 150).
    d.add_entity(insert("HOLES", "PAIR", (60.0, 150.0), 0.0, 2.0, 2.0));
    // An array of 3 columns × 2 rows, 30 and 25 mm apart, turned 90°: the columns run along +y
    // and the rows along −x from (250, 40).
    let mut arrayed = insert("HOLES", "HOLE", (250.0, 40.0), 90.0, 1.0, 1.0);
    if let EntityType::Insert(i) = &mut arrayed.specific {
        i.column_count = 3;
        i.row_count = 2;
        i.column_spacing = 30.0;
        i.row_spacing = 25.0;
    }
    d.add_entity(arrayed);
    // Unequal scale (3, 1.5) turned 20°: an ellipse of semi-axes 12 and 6 at 20°.
    d.add_entity(insert("HOLES", "HOLE", (150.0, 60.0), 20.0, 3.0, 1.5));
    // A mirrored D: an arc of half a turn closed by a line, inserted at x scale −1.
    let mut d_shape = LwPolyline::default();
    d_shape.set_is_closed(true);
    for (x, y, bulge) in [(0.0, -6.0, 1.0), (0.0, 6.0, 0.0)] {
        d_shape.vertices.push(LwPolylineVertex {
            x,
            y,
            bulge,
            ..Default::default()
        });
    }
    d.add_block(block(
        "D",
        (0.0, 0.0),
        vec![on("0", EntityType::LwPolyline(d_shape))],
    ));
    d.add_entity(insert("HOLES", "D", (340.0, 150.0), 0.0, -1.0, 1.0));
    let report = plan(dir.path(), &d);
    let holes: Vec<&serde_json::Value> = features(&report)
        .iter()
        .filter(|x| x["kind"] == "hole")
        .collect();
    // 2 nested + 6 arrayed + 1 ellipse + 1 D.
    assert_eq!(holes.len(), 10, "{}", report["features"]);
    // Each circle's contour is arcs about its centre (read back from the program, f32: 1e-4).
    let program = fs::read_to_string(dir.path().join("out/b.nc")).unwrap();
    let read = read_back(&program);
    let mut centres: Vec<(i64, i64)> = holes
        .iter()
        .filter(|h| h["ellipse"].is_null())
        .filter_map(|h| {
            let moves = marked_moves(&read, h["name"].as_str().unwrap(), "contour");
            let arcs: Vec<[f64; 2]> = moves
                .iter()
                .filter_map(|&i| read.moves[i].arc.map(|a| a.0))
                .collect();
            let all_arcs = !arcs.is_empty() && arcs.len() == moves.len();
            let c = arcs.first().copied()?;
            let same = arcs.iter().all(|a| (a[0] - c[0]).hypot(a[1] - c[1]) < 1e-4);
            let on_grid = (c[0] - c[0].round()).abs() < 1e-4 && (c[1] - c[1].round()).abs() < 1e-4;
            (all_arcs && same && on_grid).then(|| (c[0].round() as i64, c[1].round() as i64))
        })
        .collect();
    centres.sort();
    let mut want = vec![(20, 150), (100, 150)];
    for row in 0..2 {
        for col in 0..3 {
            want.push((250 - 25 * row, 40 + 30 * col));
        }
    }
    want.sort();
    assert_eq!(centres, want);
    let ellipse = holes
        .iter()
        .find_map(|h| (!h["ellipse"].is_null()).then(|| &h["ellipse"]))
        .expect("the unequally scaled circle is an elliptical hole");
    assert!(near(f(&ellipse["semi_major_mm"]), 12.0), "{ellipse}");
    assert!(near(f(&ellipse["semi_minor_mm"]), 6.0), "{ellipse}");
    assert!(near(f(&ellipse["angle_deg"]), 20.0), "{ellipse}");
    assert!(near(f(&ellipse["center_mm"][0]), 150.0) && near(f(&ellipse["center_mm"][1]), 60.0));
    // The mirrored D bulges to −x (its straight side on x = 340): every point of its contour
    // lies left of 340 − kerf/2, and reaches to 340 − 6 + kerf/2.
    let kerf = f(&report["tool_diameter_mm"]);
    let d_hole = holes
        .iter()
        .map(|h| marked_moves(&read, h["name"].as_str().unwrap(), "contour"))
        .find(|m| m.iter().all(|&i| read.moves[i].to[0] > 330.0))
        .expect("the D's contour");
    let xs: Vec<f64> = d_hole.iter().map(|&i| read.moves[i].to[0]).collect();
    let hi = xs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    assert!((hi - (340.0 - kerf / 2.0)).abs() < 1e-3, "{xs:?}");
    assert!(
        xs.iter().all(|&x| x > 340.0 - 6.0 + kerf / 2.0 - 1e-3),
        "{xs:?}"
    );
}

#[test]
fn a_missing_block_and_arcs_under_unequal_scale_are_refused_in_words() {
    let dir = tempfile::tempdir().unwrap();
    let mut d = new_drawing();
    d.add_entity(insert("HOLES", "NOWHERE", (50.0, 50.0), 0.0, 1.0, 1.0));
    d.save_file(dir.path().join("missing.dxf")).unwrap();
    let mut d = new_drawing();
    let mut p = LwPolyline::default();
    p.set_is_closed(true);
    for (x, y, bulge) in [(0.0, -6.0, 1.0), (0.0, 6.0, 0.0)] {
        p.vertices.push(LwPolylineVertex {
            x,
            y,
            bulge,
            ..Default::default()
        });
    }
    d.add_block(block(
        "D",
        (0.0, 0.0),
        vec![on("0", EntityType::LwPolyline(p))],
    ));
    d.add_entity(insert("HOLES", "D", (50.0, 50.0), 0.0, 2.0, 1.0));
    d.save_file(dir.path().join("stretched.dxf")).unwrap();
    for (file, expect) in [
        (
            "missing.dxf",
            "block \"NOWHERE\", which the drawing does not define",
        ),
        ("stretched.dxf", "unequal X and Y scales"),
    ] {
        let out = conicut()
            .current_dir(dir.path())
            .args(["plan", file, "--machine", &laser()])
            .output()
            .unwrap();
        assert!(!out.status.success(), "{file}");
        let message = String::from_utf8_lossy(&out.stderr);
        assert!(message.contains(expect), "{file}: {message}");
        assert!(message.contains(file), "{file}: names the file: {message}");
    }
}
