use super::*;
use crate::chain::BayProblem;
use crate::chain::{ChainError, InnerShape};
use crate::geom::{Ellipse, Segment};
use crate::read::EntityKind;
use crate::read::{Entity, Units, UnitsSource};

struct D(Vec<Entity>);

impl D {
    fn new() -> D {
        D(Vec::new())
    }
    fn push(&mut self, layer: &str, kind: EntityKind) -> &mut Self {
        let n = self.0.len();
        self.0.push(Entity {
            layer: layer.into(),
            handle: format!("{:X}", 0x100 + n),
            line: 10 * (n + 1),
            kind,
        });
        self
    }
    fn lines(&mut self, layer: &str, pts: &[(f64, f64)], close: bool) -> &mut Self {
        let n = pts.len();
        let count = if close { n } else { n - 1 };
        for i in 0..count {
            let (a, b) = (pts[i], pts[(i + 1) % n]);
            self.push(
                layer,
                EntityKind::Line(Segment::new(Point::new(a.0, a.1), Point::new(b.0, b.1))),
            );
        }
        self
    }
    fn poly(&mut self, layer: &str, pts: &[(f64, f64, f64)]) -> &mut Self {
        let vertices = pts.iter().map(|&(x, y, b)| (Point::new(x, y), b)).collect();
        self.push(
            layer,
            EntityKind::Polyline {
                vertices,
                closed: true,
            },
        )
    }
    fn circle(&mut self, layer: &str, x: f64, y: f64, r: f64) -> &mut Self {
        self.push(
            layer,
            EntityKind::Circle {
                centre: Point::new(x, y),
                radius: r,
            },
        )
    }
    fn build(&self) -> Result<Part, ChainError> {
        let d = Drawing {
            entities: self.0.clone(),
            units: Units::Millimetres,
            units_from: UnitsSource::Header,
            notes: Vec::new(),
            layers: Vec::new(),
        };
        build_part(&d, &ChainOptions::default())
    }
}

const PLATE: [(f64, f64, f64); 4] = [
    (0.0, 0.0, 0.0),
    (100.0, 0.0, 0.0),
    (100.0, 60.0, 0.0),
    (0.0, 60.0, 0.0),
];

#[test]
fn outline_holes_and_bays_are_sorted_and_named() {
    let mut d = D::new();
    d.poly("Plate", &PLATE)
        .circle("holes", 90.0, 10.0, 3.0)
        .circle("holes", 10.0, 10.0, 3.0)
        .lines(
            "opening-bays",
            &[(60.0, 10.0), (80.0, 10.0), (80.0, 50.0), (60.0, 50.0)],
            true,
        )
        .lines(
            "OPENING-BAYS",
            &[(20.0, 10.0), (50.0, 10.0), (50.0, 50.0), (20.0, 50.0)],
            true,
        );
    let part = d.build().unwrap();
    let outline = part.outline.unwrap();
    assert_eq!(outline.layer(), "Plate");
    assert!(outline.is_ccw());
    assert_eq!(part.holes.len(), 2);
    assert_eq!(part.holes[0].name, "hole 1");
    let InnerShape::Contour(c) = &part.holes[0].shape else {
        panic!("circle hole should be a contour")
    };
    let Element::Arc(a) = c.elements()[0] else {
        panic!("a circle is one arc")
    };
    assert_eq!(a.centre, Point::new(10.0, 10.0), "hole 1 is the left one");
    assert!(a.is_full_circle());
    // Layer names match case-insensitively; bay 1 is the left one.
    assert_eq!(part.bays.len(), 2);
    assert_eq!(part.bays[0].name(), "bay 1");
    assert_eq!(part.bays[0].corners()[0], Point::new(20.0, 10.0));
    assert!(part.warnings.is_empty(), "{:?}", part.warnings);
}

#[test]
fn open_contour_error_gives_gap_location_and_size() {
    let mut d = D::new();
    d.lines(
        "CUT",
        &[
            (0.0, 0.0),
            (50.0, 0.0),
            (50.0, 30.0),
            (0.0, 30.0),
            (0.0, 0.25),
        ],
        false,
    );
    let e = d.build().unwrap_err();
    let ChainError::Open { contours, .. } = &e else {
        panic!("{e}")
    };
    assert_eq!(contours.len(), 1);
    let gap = contours[0].gaps[0].1.unwrap();
    assert!((gap.1 - 0.25).abs() < 1e-12);
    let msg = e.to_string();
    assert!(msg.contains("(0.000, 0.250) mm"), "{msg}");
    assert!(msg.contains("gap of 0.2500 mm"), "{msg}");
    assert!(msg.contains("raise the gap tolerance"), "{msg}");
}

#[test]
fn raising_the_max_gap_closes_the_gap_and_snaps_it() {
    let mut d = D::new();
    d.lines(
        "CUT",
        &[
            (0.0, 0.0),
            (50.0, 0.0),
            (50.0, 30.0),
            (0.0, 30.0),
            (0.0, 0.25),
        ],
        false,
    );
    let drawing = Drawing {
        entities: d.0.clone(),
        units: Units::Millimetres,
        units_from: UnitsSource::Header,
        notes: Vec::new(),
        layers: Vec::new(),
    };
    let opts = ChainOptions {
        max_gap: 0.3,
        ..ChainOptions::default()
    };
    let part = build_part(&drawing, &opts).unwrap();
    let c = part.outline.unwrap();
    for i in 0..c.elements().len() {
        assert_eq!(
            c.elements()[i].end(),
            c.elements()[(i + 1) % c.elements().len()].start()
        );
    }
}

#[test]
fn a_lone_contour_is_the_outline_and_disjoint_shapes_are_holes() {
    let mut d = D::new();
    d.poly("CUT", &PLATE);
    assert!(d.build().unwrap().outline.is_some());

    let mut d = D::new();
    d.circle("CUT", 0.0, 0.0, 5.0).circle("CUT", 20.0, 0.0, 5.0);
    let part = d.build().unwrap();
    assert!(part.outline.is_none());
    assert_eq!(part.holes.len(), 2);
    assert_eq!(part.warnings.len(), 1, "{:?}", part.warnings);
}

#[test]
fn bays_alone_make_a_part_without_outline() {
    let mut d = D::new();
    d.lines(
        DEFAULT_BAY_LAYER,
        &[(0.0, 0.0), (30.0, 0.0), (25.0, 20.0), (5.0, 20.0)],
        true,
    );
    let part = d.build().unwrap();
    assert!(part.outline.is_none() && part.holes.is_empty());
    assert_eq!(part.bays.len(), 1);
}

#[test]
fn two_parts_with_holes_are_refused() {
    let mut d = D::new();
    d.poly("CUT", &PLATE).circle("CUT", 50.0, 30.0, 5.0);
    let shifted: Vec<(f64, f64, f64)> = PLATE.iter().map(|&(x, y, b)| (x + 200.0, y, b)).collect();
    d.poly("CUT", &shifted);
    let e = d.build().unwrap_err();
    assert!(
        matches!(e, ChainError::SeveralOutlines { ref shapes } if shapes.len() == 2),
        "{e}"
    );
}

#[test]
fn hole_inside_a_hole_is_refused() {
    let mut d = D::new();
    d.poly("CUT", &PLATE)
        .circle("CUT", 50.0, 30.0, 20.0)
        .circle("CUT", 50.0, 30.0, 5.0);
    let e = d.build().unwrap_err();
    let ChainError::Nested { inner, middle, .. } = &e else {
        panic!("{e}")
    };
    assert!(inner.contains("handle 102"), "{inner}");
    assert!(middle.contains("handle 101"), "{middle}");
}

#[test]
fn contour_crossing_the_outline_is_refused() {
    let mut d = D::new();
    d.poly("CUT", &PLATE).circle("CUT", 100.0, 30.0, 5.0);
    let e = d.build().unwrap_err();
    let ChainError::Crossing { at, .. } = &e else {
        panic!("{e}")
    };
    assert!((at.x - 100.0).abs() < 1e-9 && (at.y - 30.0).abs() < 5.0 + 1e-9);
}

#[test]
fn full_ellipse_is_a_hole_a_lone_partial_one_a_note_and_one_in_a_contour_refused() {
    let e = Ellipse::new(Point::new(50.0, 30.0), 20.0, 10.0, 0.3).unwrap();
    let mut d = D::new();
    d.poly("CUT", &PLATE).push(
        "CUT",
        EntityKind::Ellipse {
            ellipse: e,
            start: 0.0,
            end: std::f64::consts::TAU,
        },
    );
    let part = d.build().unwrap();
    assert_eq!(part.holes.len(), 1);
    assert_eq!(part.holes[0].shape, InnerShape::Ellipse(e));

    let mut d = D::new();
    d.poly("CUT", &PLATE).push(
        "CUT",
        EntityKind::Ellipse {
            ellipse: e,
            start: 0.5,
            end: 2.0,
        },
    );
    // Alone (its ends meet nothing): annotation or construction, listed and not cut.
    let part = d.build().unwrap();
    assert!(part.holes.is_empty());
    assert!(
        part.notes
            .iter()
            .any(|n| n.contains("ELLIPSE 101") && n.contains("not cut")),
        "{:?}",
        part.notes
    );
    // Closed by a line between its ends: part of a contour, which cannot be cut.
    let (a, b) = (e.point(0.5), e.point(2.0));
    d.lines("CUT", &[(b.x, b.y), (a.x, a.y)], false);
    let err = d.build().unwrap_err();
    assert!(
        matches!(err, ChainError::PartialEllipse { ref handle, .. } if handle == "101"),
        "{err}"
    );
}

#[test]
fn three_pieces_at_one_point_are_refused() {
    let mut d = D::new();
    d.lines("CUT", &[(0.0, 0.0), (10.0, 0.0), (10.0, 10.0)], true)
        .lines("CUT", &[(10.0, 0.0), (20.0, 0.0)], false);
    assert!(matches!(d.build(), Err(ChainError::Branch { .. })));
}

#[test]
fn bay_outside_the_outline_is_a_warning() {
    let mut d = D::new();
    d.poly("CUT", &PLATE).lines(
        DEFAULT_BAY_LAYER,
        &[(90.0, 10.0), (130.0, 10.0), (130.0, 40.0), (90.0, 40.0)],
        true,
    );
    let part = d.build().unwrap();
    assert_eq!(part.warnings.len(), 1);
    assert!(part.warnings[0].contains("bay 1"), "{}", part.warnings[0]);
    assert!(
        part.warnings[0].contains("(130.000, 10.000) mm"),
        "{}",
        part.warnings[0]
    );
}

#[test]
fn circle_on_the_bay_layer_is_an_arc_error_and_points_are_warned() {
    let mut d = D::new();
    d.circle(DEFAULT_BAY_LAYER, 0.0, 0.0, 5.0);
    assert!(matches!(d.build(), Err(ChainError::Bay(b)) if b.problem == BayProblem::Arc));

    let mut d = D::new();
    d.poly("CUT", &PLATE)
        .push("MARKS", EntityKind::Point(Point::new(3.0, 4.0)));
    let part = d.build().unwrap();
    assert_eq!(part.warnings.len(), 1);
    assert!(part.warnings[0].contains("MARKS"), "{}", part.warnings[0]);
}

#[test]
fn rounded_polyline_outline_keeps_its_arcs() {
    // A 40 × 20 slot: two straight sides and two half circles as bulges of 1.
    let mut d = D::new();
    d.poly(
        "CUT",
        &[
            (10.0, 0.0, 0.0),
            (30.0, 0.0, 1.0),
            (30.0, 20.0, 0.0),
            (10.0, 20.0, 1.0),
        ],
    );
    let part = d.build().unwrap();
    let c = part.outline.unwrap();
    let area = 20.0 * 20.0 + std::f64::consts::PI * 100.0;
    assert!((c.signed_area() - area).abs() < 1e-9);
    assert_eq!(c.elements().len(), 4);
}

#[test]
fn duplicate_lines_enclose_no_area() {
    let mut d = D::new();
    d.lines("CUT", &[(0.0, 0.0), (10.0, 0.0)], false).lines(
        "CUT",
        &[(10.0, 0.0), (0.0, 0.0)],
        false,
    );
    assert!(matches!(d.build(), Err(ChainError::NoArea { .. })));
}

#[test]
fn negative_max_gap_is_refused() {
    let d = Drawing {
        entities: Vec::new(),
        units: Units::Millimetres,
        units_from: UnitsSource::Header,
        notes: Vec::new(),
        layers: Vec::new(),
    };
    let opts = ChainOptions {
        max_gap: -1.0,
        ..ChainOptions::default()
    };
    assert_eq!(build_part(&d, &opts), Err(ChainError::BadMaxGap(-1.0)));
}

#[test]
fn among_many_holes_the_one_crossing_pair_and_the_one_nested_pair_are_found() {
    // 30 × 30 squares of loose lines in a 700 × 700 plate: the grid that narrows the pair
    // checks must still find the two that overlap, wherever they are in the list.
    let big = [(0.0, 0.0), (700.0, 0.0), (700.0, 700.0), (0.0, 700.0)];
    let square = |x: f64, y: f64, s: f64| [(x, y), (x + s, y), (x + s, y + s), (x, y + s)];
    let grid = |d: &mut D| {
        d.lines("CUT", &big, true);
        for i in 0..30 {
            for j in 0..30 {
                d.lines(
                    "CUT",
                    &square(10.0 + 22.0 * i as f64, 10.0 + 22.0 * j as f64, 8.0),
                    true,
                );
            }
        }
    };
    let mut d = D::new();
    grid(&mut d);
    let part = d.build().expect("900 squares apart are holes");
    assert_eq!(part.holes.len(), 900);
    // One more square overlapping the last one's corner: a crossing.
    let mut d = D::new();
    grid(&mut d);
    d.lines(
        "CUT",
        &square(10.0 + 22.0 * 29.0 + 5.0, 10.0 + 22.0 * 29.0 + 5.0, 8.0),
        true,
    );
    let e = d.build().unwrap_err();
    assert!(matches!(e, ChainError::Crossing { .. }), "{e}");
    // One inside a square in the middle: a hole inside a hole.
    let mut d = D::new();
    grid(&mut d);
    d.lines(
        "CUT",
        &square(10.0 + 22.0 * 14.0 + 2.0, 10.0 + 22.0 * 14.0 + 2.0, 4.0),
        true,
    );
    let e = d.build().unwrap_err();
    assert!(matches!(e, ChainError::Nested { .. }), "{e}");
}

#[test]
fn a_layer_of_construction_lines_is_a_warning_not_a_refusal() {
    let mut d = D::new();
    d.poly("CUT", &PLATE)
        .lines("GUIDES", &[(5.0, 5.0), (60.0, 40.0)], false)
        .lines("GUIDES", &[(10.0, 40.0), (30.0, 35.0), (30.0, 5.0)], false);
    let part = d.build().unwrap();
    assert!(part.outline.is_some());
    let w = part.warnings.join("\n");
    assert!(
        w.contains("layer GUIDES holds only open pieces (2 runs"),
        "{w}"
    );
    assert!(w.contains("--skip-layers GUIDES"), "{w}");
    // A run that nearly closes (its ends 1 mm apart on a 100 mm run) is a contour with a gap.
    let mut d = D::new();
    d.poly("CUT", &PLATE).lines(
        "GUIDES",
        &[
            (5.0, 5.0),
            (30.0, 5.0),
            (30.0, 30.0),
            (5.0, 30.0),
            (5.0, 6.0),
        ],
        false,
    );
    assert!(matches!(d.build(), Err(ChainError::Open { .. })));
}

#[test]
fn a_shape_drawn_twice_is_kept_once_with_a_warning() {
    // The outline, a square hole drawn twice (the copy starting at another corner and running
    // the other way), a circle drawn twice and an ellipse drawn twice: each kept once.
    let e = Ellipse::new(Point::new(70.0, 30.0), 8.0, 4.0, 0.4).unwrap();
    let full = |ellipse| EntityKind::Ellipse {
        ellipse,
        start: 0.0,
        end: std::f64::consts::TAU,
    };
    let mut d = D::new();
    d.lines(
        "PLATE",
        &[(0.0, 0.0), (100.0, 0.0), (100.0, 60.0), (0.0, 60.0)],
        true,
    )
    .poly(
        "PLATE",
        &[
            (10.0, 10.0, 0.0),
            (20.0, 10.0, 0.0),
            (20.0, 20.0, 0.0),
            (10.0, 20.0, 0.0),
        ],
    )
    .poly(
        "PLATE",
        &[
            (20.0, 20.0, 0.0),
            (20.0, 10.0, 0.0),
            (10.0, 10.0, 0.0),
            (10.0, 20.0, 0.0),
        ],
    )
    .circle("PLATE", 40.0, 30.0, 5.0)
    .circle("PLATE", 40.0, 30.0, 5.0)
    .push("PLATE", full(e))
    .push("PLATE", full(e));
    let part = d.build().unwrap();
    assert_eq!(part.holes.len(), 3, "{:?}", part.warnings);
    let copies: Vec<&String> = part
        .warnings
        .iter()
        .filter(|w| w.contains("drawn twice"))
        .collect();
    assert_eq!(copies.len(), 3, "{:?}", part.warnings);
    // Nearly the same is not the same: a circle 0.01 mm off its twin crosses it.
    let mut d = D::new();
    d.lines(
        "PLATE",
        &[(0.0, 0.0), (100.0, 0.0), (100.0, 60.0), (0.0, 60.0)],
        true,
    )
    .circle("PLATE", 40.0, 30.0, 5.0)
    .circle("PLATE", 40.01, 30.0, 5.0);
    assert!(matches!(d.build(), Err(ChainError::Crossing { .. })));
}
