//! Reading DXF drawings (stage 1) and joining them into a part (stage 2), end to end, on
//! drawings written in memory with the `dxf` crate (R2000 unless said otherwise).

use conicut::chain::{
    BayProblem, ChainError, ChainOptions, DEFAULT_BAY_LAYER, InnerShape, build_part,
};
use conicut::demo::{BAYS, BOLT_HOLE_CENTRES, BOLT_HOLE_RADIUS, demo_drawing, demo_dxf_bytes};
use conicut::geom::Element;
use conicut::geom::Point;
use conicut::read::{EntityKind, ReadError, ReadOptions, Units, UnitsSource, read_dxf};
use dxf::entities::{Arc, Entity, EntityType, Line, Text};
use dxf::enums::AcadVersion;

fn opts(units: Option<Units>) -> ReadOptions<'static> {
    ReadOptions {
        file_name: "drawing.dxf",
        units,
    }
}

fn save(d: &dxf::Drawing) -> Vec<u8> {
    let mut out = Vec::new();
    d.save(&mut out).expect("save to memory");
    out
}

fn drawing(units: dxf::enums::Units) -> dxf::Drawing {
    let mut d = dxf::Drawing::new();
    d.header.version = AcadVersion::R2000;
    d.header.default_drawing_units = units;
    d
}

fn add(d: &mut dxf::Drawing, layer: &str, e: EntityType) -> String {
    let mut ent = Entity::new(e);
    ent.common.layer = layer.into();
    d.add_entity(ent).common.handle.as_string()
}

fn add_lines(d: &mut dxf::Drawing, layer: &str, pts: &[(f64, f64)]) {
    for i in 0..pts.len() {
        let (a, b) = (pts[i], pts[(i + 1) % pts.len()]);
        add(
            d,
            layer,
            EntityType::Line(Line::new(
                dxf::Point::new(a.0, a.1, 0.0),
                dxf::Point::new(b.0, b.1, 0.0),
            )),
        );
    }
}

#[test]
fn demo_round_trip_keeps_contours_holes_and_bays() {
    // The demo as the dxf crate holds it in memory, against what comes back through the file.
    let source = demo_drawing();
    let drawing = read_dxf(&demo_dxf_bytes(), &opts(None)).unwrap();
    assert_eq!(drawing.units, Units::Millimetres);
    assert_eq!(drawing.units_from, UnitsSource::Header);
    let part = build_part(&drawing, &ChainOptions::default()).unwrap();

    // Outline: the LWPOLYLINE's 8 vertices give 8 elements, 4 of them quarter arcs.
    let outline_vertices = source
        .entities()
        .find_map(|e| match &e.specific {
            EntityType::LwPolyline(p) if e.common.layer == "PLATE-EDGE" => Some(p.vertices.len()),
            _ => None,
        })
        .unwrap();
    let outline = part.outline.as_ref().unwrap();
    assert_eq!(outline.elements().len(), outline_vertices);
    let arcs = outline
        .elements()
        .iter()
        .filter(|e| matches!(e, Element::Arc(_)))
        .count();
    assert_eq!(arcs, 4);
    // Area of a 240 × 140 rectangle with four 10 mm corner radii: w h − (4 − π) r².
    let area = 240.0 * 140.0 - (4.0 - std::f64::consts::PI) * 100.0;
    assert!((outline.signed_area() - area).abs() < 1e-9);

    assert_eq!(part.holes.len(), 4);
    let centres: Vec<(f64, f64)> = part
        .holes
        .iter()
        .map(|h| match &h.shape {
            InnerShape::Contour(c) => match c.elements()[..] {
                [Element::Arc(a)] => {
                    assert!((a.radius - BOLT_HOLE_RADIUS).abs() < 1e-12);
                    (a.centre.x, a.centre.y)
                }
                _ => panic!("{} is not a circle", h.name),
            },
            InnerShape::Ellipse(_) => panic!("{} is an ellipse", h.name),
        })
        .collect();
    // Holes are named left to right, then bottom to top.
    let mut expected = BOLT_HOLE_CENTRES.to_vec();
    expected.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
    assert_eq!(centres, expected);

    assert_eq!(part.bays.len(), BAYS.len());
    for (bay, want) in part.bays.iter().zip(BAYS) {
        assert_eq!(bay.corners().len(), 4, "{}", bay.name());
        for (got, want) in bay.corners().iter().zip(want) {
            assert!(
                (got.x - want.0).abs() <= 1e-9 && (got.y - want.1).abs() <= 1e-9,
                "{}: {got:?} vs {want:?}",
                bay.name()
            );
        }
    }
    assert!(part.warnings.is_empty(), "{:?}", part.warnings);
}

fn square(d: &mut dxf::Drawing) {
    add_lines(d, "CUT", &[(0.0, 0.0), (2.0, 0.0), (2.0, 2.0), (0.0, 2.0)]);
}

#[test]
fn inch_drawing_comes_back_in_millimetres() {
    // $INSUNITS 1 = inches (DXF reference, HEADER); 1 in = 25.4 mm exactly.
    let mut d = drawing(dxf::enums::Units::Inches);
    square(&mut d);
    let r = read_dxf(&save(&d), &opts(None)).unwrap();
    assert_eq!(r.units, Units::Inches);
    let corners: Vec<Point> = r
        .entities
        .iter()
        .map(|e| match e.kind {
            EntityKind::Line(s) => s.start,
            _ => panic!("not a line"),
        })
        .collect();
    assert_eq!(
        corners,
        [
            Point::new(0.0, 0.0),
            Point::new(50.8, 0.0),
            Point::new(50.8, 50.8),
            Point::new(0.0, 50.8)
        ]
    );
}

#[test]
fn unitless_drawing_needs_the_flag_and_disagreement_is_refused() {
    let mut d = drawing(dxf::enums::Units::Unitless);
    square(&mut d);
    let bytes = save(&d);
    let e = read_dxf(&bytes, &opts(None)).unwrap_err();
    assert!(matches!(e, ReadError::NoUnits { .. }), "{e:?}");
    assert!(e.to_string().contains("--units mm or --units in"), "{e}");
    assert!(e.to_string().contains("$INSUNITS is 0, unitless"), "{e}");

    let r = read_dxf(&bytes, &opts(Some(Units::Millimetres))).unwrap();
    assert_eq!(r.units_from, UnitsSource::UserFlag);
    assert_eq!(r.entities.len(), 4);

    let mut d = drawing(dxf::enums::Units::Millimeters);
    square(&mut d);
    let e = read_dxf(&save(&d), &opts(Some(Units::Inches))).unwrap_err();
    assert_eq!(
        e,
        ReadError::UnitsDisagree {
            file: "drawing.dxf".into(),
            header: Units::Millimetres,
            flag: Units::Inches
        }
    );
    // Agreement is fine and reported as coming from the header.
    let r = read_dxf(&save(&d), &opts(Some(Units::Millimetres))).unwrap();
    assert_eq!(r.units_from, UnitsSource::Header);
}

#[test]
fn r12_polyline_with_bulge_reads_and_chains() {
    // A 20 × 10 slot drawn as an R12 heavy POLYLINE: two half circles (bulge 1, DXF reference,
    // VERTEX group 42: bulge = tan(θ/4), 1 = semicircle).
    let mut d = dxf::Drawing::new(); // R12 by default
    d.header.version = AcadVersion::R12;
    let mut p = dxf::entities::Polyline::default();
    p.set_is_closed(true);
    for (x, y, b) in [
        (5.0, 0.0, 0.0),
        (15.0, 0.0, 1.0),
        (15.0, 10.0, 0.0),
        (5.0, 10.0, 1.0),
    ] {
        let mut v = dxf::entities::Vertex::new(dxf::Point::new(x, y, 0.0));
        v.bulge = b;
        p.add_vertex(&mut d, v);
    }
    add(&mut d, "CUT", EntityType::Polyline(p));
    let bytes = save(&d);
    let text = String::from_utf8_lossy(&bytes);
    assert!(text.contains("AC1009"), "written as R12");
    let r = read_dxf(&bytes, &opts(Some(Units::Millimetres))).unwrap();
    let EntityKind::Polyline { vertices, closed } = &r.entities[0].kind else {
        panic!("not a polyline: {:?}", r.entities[0].kind)
    };
    assert!(closed);
    assert_eq!(vertices[1], (Point::new(15.0, 0.0), 1.0));
    let part = build_part(&r, &ChainOptions::default()).unwrap();
    let c = part.outline.unwrap();
    // Area of the slot: 10 × 10 + π 5².
    assert!((c.signed_area() - (100.0 + 25.0 * std::f64::consts::PI)).abs() < 1e-9);
}

#[test]
fn mirrored_arc_lands_where_the_arbitrary_axis_algorithm_puts_it() {
    // docs/sources.md P2.3: extrusion (0,0,−1): centre (x, y) → (−x, y), WCS angles
    // 180° − θ, and the arc runs clockwise seen from +Z.
    let mut d = drawing(dxf::enums::Units::Millimeters);
    let mut a = Arc::new(dxf::Point::new(10.0, 5.0, 0.0), 4.0, 0.0, 90.0);
    a.normal = dxf::Vector::new(0.0, 0.0, -1.0);
    add(&mut d, "CUT", EntityType::Arc(a));
    let r = read_dxf(&save(&d), &opts(None)).unwrap();
    let EntityKind::Arc(arc) = r.entities[0].kind else {
        panic!("not an arc")
    };
    assert_eq!(arc.centre, Point::new(-10.0, 5.0));
    assert!(arc.sweep < 0.0, "runs clockwise");
    assert!((arc.sweep + std::f64::consts::FRAC_PI_2).abs() < 1e-12);
    // OCS start (14, 5) → WCS (−14, 5); OCS end (10, 9) → WCS (−10, 9).
    let (s, e) = (arc.start_point(), arc.end_point());
    assert!(
        (s.x + 14.0).abs() < 1e-12 && (s.y - 5.0).abs() < 1e-12,
        "{s:?}"
    );
    assert!(
        (e.x + 10.0).abs() < 1e-12 && (e.y - 9.0).abs() < 1e-12,
        "{e:?}"
    );
}

#[test]
fn text_is_reported_in_notes_with_layer_and_handle() {
    let mut d = drawing(dxf::enums::Units::Millimeters);
    square(&mut d);
    let t = Text {
        value: "PART 7".into(),
        ..Default::default()
    };
    let handle = add(&mut d, "LABELS", EntityType::Text(t));
    let r = read_dxf(&save(&d), &opts(None)).unwrap();
    assert_eq!(r.entities.len(), 4);
    assert_eq!(r.notes.len(), 1, "{:?}", r.notes);
    let note = &r.notes[0];
    assert!(note.contains("TEXT"), "{note}");
    assert!(note.contains("layer LABELS"), "{note}");
    assert!(note.contains(&format!("handle {handle}")), "{note}");
}

#[test]
fn open_contour_error_names_the_gap() {
    let mut d = drawing(dxf::enums::Units::Millimeters);
    let pts = [
        (0.0, 0.0),
        (40.0, 0.0),
        (40.0, 20.0),
        (0.0, 20.0),
        (0.0, 0.5),
    ];
    for w in pts.windows(2) {
        add(
            &mut d,
            "CUT",
            EntityType::Line(Line::new(
                dxf::Point::new(w[0].0, w[0].1, 0.0),
                dxf::Point::new(w[1].0, w[1].1, 0.0),
            )),
        );
    }
    let r = read_dxf(&save(&d), &opts(None)).unwrap();
    let e = build_part(&r, &ChainOptions::default()).unwrap_err();
    let msg = e.to_string();
    assert!(matches!(e, ChainError::Open { .. }), "{msg}");
    assert!(msg.contains("layer CUT"), "{msg}");
    assert!(msg.contains("(0.000, 0.500) mm"), "{msg}");
    assert!(msg.contains("(0.000, 0.000) mm"), "{msg}");
    assert!(msg.contains("gap of 0.5000 mm"), "{msg}");
}

#[test]
fn non_convex_bay_error_names_the_bay() {
    let mut d = drawing(dxf::enums::Units::Millimeters);
    add_lines(
        &mut d,
        DEFAULT_BAY_LAYER,
        &[
            (0.0, 0.0),
            (40.0, 0.0),
            (40.0, 30.0),
            (20.0, 10.0),
            (0.0, 30.0),
        ],
    );
    let r = read_dxf(&save(&d), &opts(None)).unwrap();
    let e = build_part(&r, &ChainOptions::default()).unwrap_err();
    let msg = e.to_string();
    let ChainError::Bay(b) = &e else {
        panic!("{msg}")
    };
    assert_eq!(b.problem, BayProblem::NotConvex);
    assert_eq!(b.bay, "bay 1");
    assert_eq!(b.at, Point::new(20.0, 10.0));
    assert!(msg.contains("bay 1"), "{msg}");
    assert!(msg.contains(DEFAULT_BAY_LAYER), "{msg}");
}

#[test]
fn five_lines_with_two_collinear_make_a_four_sided_bay() {
    let mut d = drawing(dxf::enums::Units::Millimeters);
    add_lines(
        &mut d,
        DEFAULT_BAY_LAYER,
        &[
            (0.0, 0.0),
            (25.0, 0.0),
            (60.0, 0.0),
            (50.0, 30.0),
            (10.0, 30.0),
        ],
    );
    let r = read_dxf(&save(&d), &opts(None)).unwrap();
    let part = build_part(&r, &ChainOptions::default()).unwrap();
    assert_eq!(part.bays.len(), 1);
    assert_eq!(
        part.bays[0].corners(),
        [
            Point::new(0.0, 0.0),
            Point::new(60.0, 0.0),
            Point::new(50.0, 30.0),
            Point::new(10.0, 30.0)
        ]
    );
    assert_eq!(part.bays[0].handles().len(), 5);
}

#[test]
fn bay_drawn_clockwise_comes_back_counter_clockwise() {
    let mut d = drawing(dxf::enums::Units::Millimeters);
    let cw = [(0.0, 0.0), (10.0, 30.0), (50.0, 30.0), (60.0, 0.0)];
    add_lines(&mut d, DEFAULT_BAY_LAYER, &cw);
    let r = read_dxf(&save(&d), &opts(None)).unwrap();
    let part = build_part(&r, &ChainOptions::default()).unwrap();
    let c = &part.bays[0].corners();
    let area: f64 = (0..c.len())
        .map(|i| {
            let (p, q) = (c[i], c[(i + 1) % c.len()]);
            0.5 * (p.x * q.y - q.x * p.y)
        })
        .sum();
    assert!((area - 1500.0).abs() < 1e-9, "signed area {area}");
    assert_eq!(c[1], Point::new(60.0, 0.0));
}

#[test]
fn fields_conicut_does_not_use_never_stop_the_reading() {
    // An R12 drawing as the dxf crate writes it, then given header dates out of any calendar's
    // range ($TDUPDATE, $TDINDWG: the crate's date library panics on them) and a dimension
    // style naming an arrow block (DIMSTYLE group 5: a block name in R12, a handle later, which
    // the crate cannot parse). conicut reads neither, so the drawing reads.
    let mut d = dxf::Drawing::new();
    square(&mut d);
    let text = String::from_utf8(save(&d)).unwrap();
    let patch = |text: String, from: &str, to: &str| {
        assert_eq!(
            text.matches(from).count(),
            1,
            "{from:?} once in the crate's output"
        );
        text.replace(from, to)
    };
    // The value line after `variable`'s group 40.
    let set_date = |text: String, variable: &str, value: &str| {
        let key = format!("{variable}\r\n 40\r\n");
        let at = text.find(&key).expect("the variable") + key.len();
        let end = at + text[at..].find("\r\n").unwrap();
        format!("{}{value}{}", &text[..at], &text[end..])
    };
    let text = set_date(text, "$TDUPDATE", "-1e300");
    let text = set_date(text, "$TDINDWG", "1e300");
    let text = patch(
        text,
        "  0\r\nDIMSTYLE\r\n  5\r\nA\r\n",
        "  0\r\nDIMSTYLE\r\n  5\r\nARCHTICK\r\n",
    );
    // As written, the crate cannot load it (the check is on the crate, not on conicut).
    let crate_load = std::panic::catch_unwind(|| dxf::Drawing::load(&mut text.as_bytes()).is_ok());
    assert!(
        !matches!(crate_load, Ok(true)),
        "the crate alone fails on this file"
    );
    let e = read_dxf(text.as_bytes(), &opts(None)).unwrap_err();
    // R12 has no units field: the message says so.
    assert!(
        e.to_string()
            .contains("R12 or older drawing ($ACADVER AC1009)"),
        "{e}"
    );
    let r = read_dxf(text.as_bytes(), &opts(Some(Units::Millimetres))).expect("it reads");
    assert_eq!(r.entities.len(), 4);
}
