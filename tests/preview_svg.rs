//! The SVG preview is well-formed XML, covers the part, draws each solved ellipse exactly, shows
//! every cut and plunge point, and renders (resvg) with the tool paths and ellipses in place.
//! Its legend matches the picture (samples drawn as the elements they stand for, entries only
//! for what is drawn), rapids and bays look different, labels sit in free space (boxes measured
//! here against the drawn geometry parsed back from the SVG), markers keep to small features,
//! the cut numbers follow the program's order, and cut-through kinds are worded as such.

use conicut::chain::{Bay, InnerBoundary, InnerShape, Part};
use conicut::fit::FittedCut;
use conicut::geom::{ArcSegment, Ellipse, Point, Segment};
use conicut::geom::{Contour, Element};
use conicut::plan::{CutSide, FeatureKind};
use conicut::preview::{PreviewInput, PreviewOptions, Process, preview_svg, preview_svg_with};
use resvg::tiny_skia;
use resvg::usvg;
use resvg::usvg::roxmltree;
use std::f64::consts::{FRAC_PI_2, PI, TAU};

const TOOL: f64 = 6.0;

fn line(a: Point, b: Point) -> Element {
    Element::Line(Segment::new(a, b))
}

/// A 200 × 120 plate whose top-right corner is rounded with a quarter circle of radius 20
/// (counter-clockwise), with a circular hole of radius 8 at (170, 25).
fn plate() -> Part {
    let corner = ArcSegment {
        centre: Point::new(180.0, 100.0),
        radius: 20.0,
        start_angle: 0.0,
        sweep: FRAC_PI_2,
    };
    let outline = Contour::new(
        vec![
            line(Point::new(0.0, 0.0), Point::new(200.0, 0.0)),
            line(Point::new(200.0, 0.0), Point::new(200.0, 100.0)),
            Element::Arc(corner),
            line(Point::new(180.0, 120.0), Point::new(0.0, 120.0)),
            line(Point::new(0.0, 120.0), Point::new(0.0, 0.0)),
        ],
        "CUT",
        vec![],
    )
    .unwrap();
    let hole = InnerBoundary {
        name: "hole 1".into(),
        layer: "CUT".into(),
        shape: InnerShape::Contour(
            Contour::new(
                vec![Element::Arc(ArcSegment::circle(
                    Point::new(170.0, 25.0),
                    8.0,
                ))],
                "CUT",
                vec![],
            )
            .unwrap(),
        ),
    };
    let bay = Bay::new(
        "bay 1",
        "BAY",
        &[
            Point::new(10.0, 10.0),
            Point::new(150.0, 10.0),
            Point::new(140.0, 110.0),
            Point::new(20.0, 105.0),
        ],
        &[],
    )
    .unwrap();
    Part {
        outline: Some(outline),
        holes: vec![hole],
        bays: vec![bay],
        warnings: vec![],
        notes: vec![],
        layers: vec![],
    }
}

fn opening() -> Ellipse {
    Ellipse::new(Point::new(80.0, 58.0), 55.0, 35.0, 20f64.to_radians()).unwrap()
}

/// The tool-centre path of an inside cut: the inward parallel curve at the tool radius, sampled.
fn cut_for(name: &str, e: &Ellipse) -> FittedCut {
    let n = 96;
    let path: Vec<Point> = (0..=n)
        .map(|i| e.inward_offset_point(i as f64 * TAU / n as f64, TOOL / 2.0))
        .collect();
    FittedCut::from_points(
        name,
        FeatureKind::Opening,
        CutSide::Inside,
        e.centre(),
        &path,
        0.05,
        0.03,
    )
}

fn hole_cut() -> FittedCut {
    let path: Vec<Point> = (0..=48)
        .map(|i| {
            let t = i as f64 * TAU / 48.0;
            Point::new(170.0 + 5.0 * t.cos(), 25.0 + 5.0 * t.sin())
        })
        .collect();
    FittedCut::from_points(
        "hole 1",
        FeatureKind::Hole,
        CutSide::Inside,
        Point::new(170.0, 25.0),
        &path,
        0.05,
        0.01,
    )
}

struct Fixture {
    part: Part,
    ellipses: Vec<(String, Ellipse)>,
    cuts: Vec<FittedCut>,
}

fn fixture() -> Fixture {
    let e = opening();
    Fixture {
        part: plate(),
        ellipses: vec![("bay 1".into(), e)],
        cuts: vec![cut_for("bay 1", &e), hole_cut()],
    }
}

fn render_input(f: &Fixture) -> String {
    preview_svg(&PreviewInput {
        title: "test plate <A&B>",
        part: &f.part,
        ellipses: &f.ellipses,
        cuts: &f.cuts,
        tool_diameter: TOOL,
        work_zero: "the drawing's origin",
    })
}

fn view_box(doc: &roxmltree::Document) -> [f64; 4] {
    let vb: Vec<f64> = doc
        .root_element()
        .attribute("viewBox")
        .expect("viewBox")
        .split_whitespace()
        .map(|s| s.parse().unwrap())
        .collect();
    [vb[0], vb[1], vb[2], vb[3]]
}

fn by_class<'a>(doc: &'a roxmltree::Document, class: &str) -> Vec<roxmltree::Node<'a, 'a>> {
    doc.descendants()
        .filter(|n| n.attribute("class") == Some(class))
        .collect()
}

/// Numbers of a path's `d`, commands dropped.
fn numbers(d: &str) -> Vec<f64> {
    d.split(|c: char| c.is_whitespace() || c == ',')
        .filter_map(|t| t.parse().ok())
        .collect()
}

/// The polyline vertices of a path made of M and L commands, y un-flipped.
fn polyline(d: &str) -> Vec<Point> {
    numbers(d)
        .chunks(2)
        .map(|c| Point::new(c[0], -c[1]))
        .collect()
}

/// Centre of an SVG elliptical arc from its endpoint parameters: W3C SVG 1.1 (Second Edition)
/// Appendix F.6.5, steps 1–3, with the radius correction of F.6.6.
#[allow(clippy::too_many_arguments)]
fn svg_arc_centre(
    x1: f64,
    y1: f64,
    mut rx: f64,
    mut ry: f64,
    phi_deg: f64,
    fa: bool,
    fs: bool,
    x2: f64,
    y2: f64,
) -> (f64, f64) {
    let (s, c) = phi_deg.to_radians().sin_cos();
    let dx = (x1 - x2) / 2.0;
    let dy = (y1 - y2) / 2.0;
    let x1p = c * dx + s * dy;
    let y1p = -s * dx + c * dy;
    let lambda = (x1p / rx).powi(2) + (y1p / ry).powi(2);
    if lambda > 1.0 {
        rx *= lambda.sqrt();
        ry *= lambda.sqrt();
    }
    let num = (rx * rx * ry * ry - rx * rx * y1p * y1p - ry * ry * x1p * x1p).max(0.0);
    let den = rx * rx * y1p * y1p + ry * ry * x1p * x1p;
    let mut k = (num / den).sqrt();
    if fa == fs {
        k = -k;
    }
    let cxp = k * rx * y1p / ry;
    let cyp = -k * ry * x1p / rx;
    (
        c * cxp - s * cyp + (x1 + x2) / 2.0,
        s * cxp + c * cyp + (y1 + y2) / 2.0,
    )
}

#[test]
fn svg_is_xml_and_its_view_box_covers_the_part() {
    let f = fixture();
    let svg = render_input(&f);
    assert!(!svg.contains("NaN") && !svg.contains("inf"));
    let doc = roxmltree::Document::parse(&svg).expect("well-formed XML");
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "svg");
    let [x, y, w, h] = view_box(&doc);
    // Width and height in mm equal the viewBox size: one user unit is one millimetre.
    assert_eq!(root.attribute("width"), Some(format!("{w}mm").as_str()));
    assert_eq!(root.attribute("height"), Some(format!("{h}mm").as_str()));
    // The plate spans x 0..200, y 0..120; flipped, y_svg spans -120..0.
    assert!(x < 0.0 && x + w > 200.0, "{x} {w}");
    assert!(y < -120.0 && y + h > 0.0, "{y} {h}");
    // The title text is escaped, not broken.
    let title = by_class(&doc, "title")[0];
    assert!(
        title
            .descendants()
            .any(|n| n.text().is_some_and(|t| t.contains("test plate <A&B>")))
    );
    // The outline path's points are the plate's corners, flipped.
    let outline = by_class(&doc, "outline");
    assert_eq!(outline.len(), 1);
    let d = outline[0].attribute("d").unwrap();
    assert!(
        d.starts_with("M 0 0 L 200 0 L 200 -100 A 20 20 0 0 0 180 -120 L 0 -120"),
        "{d}"
    );
    assert_eq!(by_class(&doc, "hole").len(), 1);
    assert_eq!(by_class(&doc, "bay").len(), 1);
}

#[test]
fn ellipse_arcs_end_on_the_major_axis_ends() {
    let f = fixture();
    let svg = render_input(&f);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let paths = by_class(&doc, "ellipse");
    assert_eq!(paths.len(), 1);
    let e = f.ellipses[0].1;
    let d = paths[0].attribute("d").unwrap();
    assert_eq!(d.matches('A').count(), 2, "two half-turn arcs: {d}");
    let v = numbers(d);
    // M x0 y0 A rx ry phi fa fs x1 y1 A rx ry phi fa fs x2 y2
    assert_eq!(v.len(), 16, "{d}");
    let (start, mid, end) = (
        Point::new(v[0], -v[1]),
        Point::new(v[7], -v[8]),
        Point::new(v[14], -v[15]),
    );
    // Major-axis ends: centre ± a (cos θ, sin θ) (definition of the ellipse's axes).
    let (s, c) = e.angle().sin_cos();
    let end_plus = Point::new(e.centre().x + e.a() * c, e.centre().y + e.a() * s);
    let end_minus = Point::new(e.centre().x - e.a() * c, e.centre().y - e.a() * s);
    assert!(start.distance(end_plus) < 1e-4, "{start:?} vs {end_plus:?}");
    assert!(mid.distance(end_minus) < 1e-4, "{mid:?} vs {end_minus:?}");
    assert!(end.distance(end_plus) < 1e-4);
    // Radii and rotation: rx = a, ry = b, rotation = −θ in degrees (y flip, STANDARDS §7).
    assert!((v[2] - e.a()).abs() < 1e-4 && (v[3] - e.b()).abs() < 1e-4);
    assert!((v[4] + e.angle().to_degrees()).abs() < 1e-4);
    // SVG 1.1 App. F.6.5: each arc's centre, recovered from its endpoint form, is the ellipse's
    // centre (flipped).
    for (x1, y1, k, x2, y2) in [(v[0], v[1], 2, v[7], v[8]), (v[7], v[8], 9, v[14], v[15])] {
        let (cx, cy) = svg_arc_centre(
            x1,
            y1,
            v[k],
            v[k + 1],
            v[k + 2],
            v[k + 3] == 1.0,
            v[k + 4] == 1.0,
            x2,
            y2,
        );
        assert!(
            (cx - e.centre().x).abs() < 1e-3 && (cy + e.centre().y).abs() < 1e-3,
            "{cx} {cy}"
        );
    }
    // The label names the semi-axes (a and b, as the report does: one convention everywhere)
    // and the angle.
    let label = by_class(&doc, "ellipse-label")[0];
    let text: Vec<&str> = label
        .descendants()
        .filter(|n| n.is_text())
        .filter_map(|n| n.text())
        .flat_map(|t| t.split_whitespace())
        .collect();
    assert_eq!(text.join(" "), "bay 1 a = 55.00, b = 35.00 mm at 20.0°");
}

#[test]
fn every_cut_has_a_path_and_every_plunge_a_marker() {
    let f = fixture();
    let svg = render_input(&f);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let paths = by_class(&doc, "tool-path");
    let plunges = by_class(&doc, "plunge");
    assert_eq!(paths.len(), f.cuts.len());
    assert_eq!(plunges.len(), f.cuts.len());
    for cut in &f.cuts {
        let path = paths
            .iter()
            .find(|n| n.attribute("data-name") == Some(cut.name.as_str()))
            .expect("a path per cut");
        let pts = polyline(path.attribute("d").unwrap());
        // The drawn path is the cut's contour; the lead-in (here the straight move from the
        // plunge point) is drawn on its own, from the plunge point to the contour's start.
        let cut_points = cut.end_points();
        assert_eq!(pts.len(), cut_points.len());
        for (a, b) in pts.iter().zip(&cut_points) {
            assert!(a.distance(*b) < 1e-4, "{a:?} vs {b:?}");
        }
        let lead = by_class(&doc, "lead-in")
            .into_iter()
            .find(|n| n.attribute("data-name") == Some(cut.name.as_str()))
            .expect("a lead-in per cut");
        let lead = polyline(lead.attribute("d").unwrap());
        assert_eq!(lead.len(), 2);
        assert!(lead[0].distance(cut.plunge) < 1e-4 && lead[1].distance(cut.start) < 1e-4);
        let marker = plunges
            .iter()
            .find(|n| n.attribute("data-name") == Some(cut.name.as_str()))
            .expect("a plunge marker per cut");
        let cx: f64 = marker.attribute("cx").unwrap().parse().unwrap();
        let cy: f64 = marker.attribute("cy").unwrap().parse().unwrap();
        assert!(Point::new(cx, -cy).distance(cut.plunge) < 1e-4);
        // At least one direction arrow per cut, pointing along the path.
        assert!(
            by_class(&doc, "direction")
                .iter()
                .any(|n| n.attribute("data-name") == Some(cut.name.as_str()))
        );
        // The tool band is as wide as the tool.
        let band = by_class(&doc, "tool-band")
            .into_iter()
            .find(|n| n.attribute("data-name") == Some(cut.name.as_str()))
            .unwrap();
        assert_eq!(band.attribute("stroke-width"), Some("6"));
    }
    assert_eq!(by_class(&doc, "rapid").len(), f.cuts.len() - 1);
    assert_eq!(by_class(&doc, "scale-bar").len(), 1);
    assert_eq!(by_class(&doc, "legend").len(), 1);
}

#[test]
fn empty_and_bad_input_still_give_a_valid_page() {
    let part = Part::default();
    let svg = preview_svg(&PreviewInput {
        title: "nothing",
        part: &part,
        ellipses: &[],
        cuts: &[],
        tool_diameter: f64::NAN,
        work_zero: "the drawing's origin",
    });
    assert!(roxmltree::Document::parse(&svg).is_ok());
    assert!(!svg.contains("NaN"));

    let mut cut = hole_cut();
    cut.moves[2] = conicut::geom::Move::Line {
        to: Point::new(f64::NAN, 1.0),
    };
    cut.plunge = Point::new(f64::INFINITY, 0.0);
    let cuts = [cut];
    let svg = preview_svg(&PreviewInput {
        title: "bad numbers",
        part: &part,
        ellipses: &[],
        cuts: &cuts,
        tool_diameter: 6.0,
        work_zero: "the drawing's origin",
    });
    let doc = roxmltree::Document::parse(&svg).unwrap();
    assert!(!svg.contains("NaN") && !svg.contains("inf"), "{svg}");
    assert_eq!(by_class(&doc, "tool-path").len(), 1);
    assert_eq!(
        by_class(&doc, "plunge").len(),
        0,
        "no marker at an infinite point"
    );
}

/// Renders the preview at `ppm` pixels per mm and returns the pixmap and the viewBox.
fn raster(svg: &str, ppm: f64) -> (tiny_skia::Pixmap, [f64; 4]) {
    let tree = usvg::Tree::from_str(svg, &usvg::Options::default()).expect("usvg reads it");
    let doc = roxmltree::Document::parse(svg).unwrap();
    let vb = view_box(&doc);
    let (w, h) = ((vb[2] * ppm).round() as u32, (vb[3] * ppm).round() as u32);
    let mut pixmap = tiny_skia::Pixmap::new(w, h).unwrap();
    let size = tree.size();
    let transform =
        tiny_skia::Transform::from_scale(w as f32 / size.width(), h as f32 / size.height());
    resvg::render(&tree, transform, &mut pixmap.as_mut());
    (pixmap, vb)
}

/// The colour at drawing point `p` (mm, y up).
fn colour_at(pixmap: &tiny_skia::Pixmap, vb: [f64; 4], ppm: f64, p: Point) -> (u8, u8, u8, u8) {
    let x = ((p.x - vb[0]) * ppm).floor() as u32;
    let y = ((-p.y - vb[1]) * ppm).floor() as u32;
    let c = pixmap.pixel(x, y).expect("inside the page");
    (c.red(), c.green(), c.blue(), c.alpha())
}

#[test]
fn rendered_preview_shows_paths_ellipses_and_arcs_where_they_are() {
    let f = fixture();
    let svg = render_input(&f);
    let ppm = 8.0;
    let (pixmap, vb) = raster(&svg, ppm);
    let at = |p: Point| colour_at(&pixmap, vb, ppm, p);
    let is_blue = |(r, g, b, a): (u8, u8, u8, u8)| a == 255 && b > 150 && r < 90 && g < 140;
    let is_orange = |(r, g, b, a): (u8, u8, u8, u8)| a == 255 && r > 150 && g < 130 && b < 80;
    let is_dark = |(r, g, b, a): (u8, u8, u8, u8)| a == 255 && r < 80 && g < 80 && b < 80;
    let is_white = |(r, g, b, a): (u8, u8, u8, u8)| a == 255 && r > 245 && g > 245 && b > 245;

    // A point on a tool path (a vertex between two moves, away from any arrowhead) is blue.
    let bay_cut = &f.cuts[0];
    let p = bay_cut.end_points()[30];
    assert!(is_blue(at(p)), "{:?} at {p:?}", at(p));
    let p = f.cuts[1].end_points()[20];
    assert!(is_blue(at(p)), "{:?} at {p:?}", at(p));
    // The ellipse's minor-axis ends (curve points, away from the label) are orange.
    let e = f.ellipses[0].1;
    for t in [FRAC_PI_2, 3.0 * FRAC_PI_2] {
        let p = e.point(t);
        assert!(is_orange(at(p)), "{:?} at {p:?}", at(p));
    }
    // The rounded corner bulges outwards (counter-clockwise arc about (180, 100)): its midpoint is
    // drawn, and the mirror point a wrong sweep flag would give is blank.
    let on_arc = Point::new(
        180.0 + 20.0 * (PI / 4.0).cos(),
        100.0 + 20.0 * (PI / 4.0).sin(),
    );
    assert!(is_dark(at(on_arc)), "{:?}", at(on_arc));
    let wrong = Point::new(
        200.0 - 20.0 * (PI / 4.0).cos(),
        120.0 - 20.0 * (PI / 4.0).sin(),
    );
    assert!(is_white(at(wrong)), "{:?}", at(wrong));
    // The hole circle is drawn all round.
    for k in 0..8 {
        let t = k as f64 * TAU / 8.0 + 0.2;
        let p = Point::new(170.0 + 8.0 * t.cos(), 25.0 + 8.0 * t.sin());
        assert!(is_dark(at(p)), "{:?} at {p:?}", at(p));
    }
    // Plain plate away from everything is background white.
    let blank = Point::new(185.0, 60.0);
    assert!(is_white(at(blank)), "{:?}", at(blank));
}

/// The commands of a path's `d`: each letter with its numbers.
fn commands(d: &str) -> Vec<(char, Vec<f64>)> {
    let mut out: Vec<(char, Vec<f64>)> = Vec::new();
    for token in d.split_whitespace() {
        match token.parse::<f64>() {
            Ok(v) => out.last_mut().expect("a command first").1.push(v),
            Err(_) => out.push((token.chars().next().unwrap(), Vec::new())),
        }
    }
    out
}

#[test]
fn arc_moves_are_drawn_as_exact_svg_arcs() {
    let cuts = stadium_and_hook();
    let part = Part::default();
    let svg = preview_svg(&PreviewInput {
        title: "arcs",
        part: &part,
        ellipses: &[],
        cuts: &cuts,
        tool_diameter: 2.0,
        work_zero: "the drawing's origin",
    });
    let doc = roxmltree::Document::parse(&svg).unwrap();
    for (cut, (centres, flag)) in cuts.iter().zip([
        (vec![Point::new(60.0, 30.0), Point::new(40.0, 30.0)], 0.0),
        (vec![Point::new(120.0, 30.0)], 1.0),
    ]) {
        check_svg_arcs(&doc, cut, &centres, flag);
    }
    check_arcs_rendered(&svg);
}

/// A stadium run counter-clockwise (two half turns about (60, 30) and (40, 30), radius 10),
/// and a three-quarter turn clockwise about (120, 30), radius 10.
fn stadium_and_hook() -> [FittedCut; 2] {
    use conicut::geom::Move;
    let mut stadium = FittedCut::from_points(
        "stadium",
        FeatureKind::Hole,
        CutSide::Inside,
        Point::new(50.0, 30.0),
        &[Point::new(40.0, 20.0)],
        0.01,
        0.0,
    );
    stadium.moves = vec![
        Move::Line {
            to: Point::new(60.0, 20.0),
        },
        Move::Arc {
            to: Point::new(60.0, 40.0),
            centre: Point::new(60.0, 30.0),
            ccw: true,
        },
        Move::Line {
            to: Point::new(40.0, 40.0),
        },
        Move::Arc {
            to: Point::new(40.0, 20.0),
            centre: Point::new(40.0, 30.0),
            ccw: true,
        },
    ];
    let mut hook = FittedCut::from_points(
        "hook",
        FeatureKind::Hole,
        CutSide::Inside,
        Point::new(120.0, 30.0),
        &[Point::new(130.0, 30.0)],
        0.01,
        0.0,
    );
    hook.moves = vec![Move::Arc {
        to: Point::new(120.0, 40.0),
        centre: Point::new(120.0, 30.0),
        ccw: false,
    }];
    [stadium, hook]
}

/// The tool path of `cut` is drawn with SVG arcs of radius 10 about `centres`, each with the
/// sweep flag `flag`, two pieces per turn.
fn check_svg_arcs(doc: &roxmltree::Document, cut: &FittedCut, centres: &[Point], flag: f64) {
    let path = by_class(doc, "tool-path")
        .into_iter()
        .find(|n| n.attribute("data-name") == Some(cut.name.as_str()))
        .unwrap();
    let cmds = commands(path.attribute("d").unwrap());
    let mut current = (0.0, 0.0);
    let mut arcs = 0;
    for (c, v) in &cmds {
        if *c == 'A' {
            // SVG 1.1 §8.3.8: A rx ry x-axis-rotation large-arc-flag sweep-flag x y. Every
            // piece turns at most half a turn (large-arc 0); with the y flip a
            // counter-clockwise (G3) move has sweep flag 0, a clockwise (G2) one 1
            // (docs/sources.md P7).
            assert_eq!(&v[..5], &[10.0, 10.0, 0.0, 0.0, flag], "{cmds:?}");
            let (cx, cy) = svg_arc_centre(
                current.0,
                current.1,
                v[0],
                v[1],
                v[2],
                false,
                v[4] == 1.0,
                v[5],
                v[6],
            );
            // Coordinates are written with 4 decimals (0.1 µm); a piece of 135° moves its
            // centre by well under 1 µm for that rounding.
            let centre = Point::new(cx, -cy);
            assert!(
                centres.iter().any(|c| c.distance(centre) < 1e-3),
                "{}: centre {centre:?}",
                cut.name
            );
            arcs += 1;
        }
        // `Z` (the closing of a run that ends where it starts) has no numbers.
        if v.len() >= 2 {
            current = (v[v.len() - 2], v[v.len() - 1]);
        }
    }
    // Half turns and the three-quarter turn are drawn in two pieces each.
    assert_eq!(arcs, 2 * centres.len(), "{}: {cmds:?}", cut.name);
}

/// Rendered, the arcs bulge the way they turn.
fn check_arcs_rendered(svg: &str) {
    // Rendered, the stadium's right end bulges to the right (through (70, 30)) and not to the
    // left (through (50, 30), where a wrong sweep flag would put it).
    let ppm = 8.0;
    let (pixmap, vb) = raster(svg, ppm);
    let at = |p: Point| colour_at(&pixmap, vb, ppm, p);
    let is_blue = |(r, g, b, a): (u8, u8, u8, u8)| a == 255 && b > 150 && r < 90 && g < 140;
    assert!(
        is_blue(at(Point::new(70.0, 30.0))),
        "{:?}",
        at(Point::new(70.0, 30.0))
    );
    assert!(is_blue(at(Point::new(30.0, 30.0))));
    assert!(!is_blue(at(Point::new(52.0, 30.0))));
    // The clockwise hook passes (120, 20) and (110, 30), not (127, 37).
    assert!(is_blue(at(Point::new(120.0, 20.0))));
    assert!(is_blue(at(Point::new(110.0, 30.0))));
    assert!(!is_blue(at(Point::new(127.0, 37.0))));
}

// ---- The legend, the looks, the labels and the words ----------------------------------------

/// The presentation attributes a legend sample must share with what it stands for.
const LOOK_ATTRIBUTES: [&str; 10] = [
    "stroke",
    "stroke-width",
    "stroke-dasharray",
    "stroke-opacity",
    "stroke-linecap",
    "stroke-linejoin",
    "fill",
    "fill-opacity",
    "marker-mid",
    "font-weight",
];

/// The value of a presentation attribute as it applies to `n`: its own or its nearest
/// ancestor's (SVG presentation attributes inherit).
fn effective<'a>(n: roxmltree::Node<'a, 'a>, name: &str) -> Option<&'a str> {
    n.ancestors()
        .filter(|a| a.is_element())
        .find_map(|a| a.attribute(name))
}

fn look_of(n: roxmltree::Node) -> Vec<(&'static str, Option<String>)> {
    LOOK_ATTRIBUTES
        .iter()
        .map(|&a| (a, effective(n, a).map(str::to_string)))
        .collect()
}

fn in_legend(n: &roxmltree::Node) -> bool {
    n.ancestors()
        .any(|a| a.attribute("class") == Some("legend"))
}

/// Drawn elements (outside the legend) with class `class`.
fn drawn<'a>(doc: &'a roxmltree::Document, class: &str) -> Vec<roxmltree::Node<'a, 'a>> {
    by_class(doc, class)
        .into_iter()
        .filter(|n| !in_legend(n))
        .collect()
}

/// The legend's samples and the classes each stands for.
fn samples<'a>(doc: &'a roxmltree::Document) -> Vec<(roxmltree::Node<'a, 'a>, Vec<String>)> {
    by_class(doc, "legend-sample")
        .into_iter()
        .map(|n| {
            let classes = n
                .attribute("data-sample")
                .expect("a sample names its classes")
                .split_whitespace()
                .map(str::to_string)
                .collect();
            (n, classes)
        })
        .collect()
}

/// Every class the legend has a sample for.
fn legend_classes(doc: &roxmltree::Document) -> Vec<String> {
    samples(doc).into_iter().flat_map(|(_, c)| c).collect()
}

/// All the text of the elements under `n`, each piece trimmed (the writer puts text on a line
/// of its own), joined by spaces.
fn text_of(n: roxmltree::Node) -> String {
    n.descendants()
        .filter(|t| t.is_text())
        .filter_map(|t| t.text())
        .map(str::trim)
        .filter(|t| !t.is_empty())
        .collect::<Vec<_>>()
        .join(" ")
}

/// The fixture with everything a preview can show: a pocket's clearing before the bay's lead-in,
/// an overcut and a lead-out, a tab on the hole's path, a rapid between the cuts, the work zero
/// at the plate's corner.
fn full_fixture() -> Fixture {
    use conicut::geom::Move;
    let mut f = fixture();
    let bay = &mut f.cuts[0];
    let c = opening().centre();
    bay.clearing = vec![
        Move::Line {
            to: Point::new(c.x + 8.0, c.y),
        },
        Move::Arc {
            to: Point::new(c.x - 8.0, c.y),
            centre: c,
            ccw: true,
        },
        Move::Arc {
            to: Point::new(c.x + 8.0, c.y),
            centre: c,
            ccw: true,
        },
    ];
    bay.overcut = bay.moves[..3].to_vec();
    bay.lead_out = vec![Move::Line {
        to: Point::new(c.x + 20.0, c.y + 4.0),
    }];
    f.cuts[1].tabs = vec![(8.0, 12.0)];
    f
}

fn render_fixture(f: &Fixture, process: Process) -> String {
    preview_svg_with(
        &PreviewInput {
            title: "test plate",
            part: &f.part,
            ellipses: &f.ellipses,
            cuts: &f.cuts,
            tool_diameter: TOOL,
            work_zero: "the lower-left corner of the outline's box",
        },
        &PreviewOptions { process },
    )
}

#[test]
fn legend_samples_are_drawn_as_what_they_stand_for() {
    let f = full_fixture();
    let svg = render_fixture(&f, Process::Tool);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let all = samples(&doc);
    assert!(all.len() >= 15, "{} samples", all.len());
    for (sample, classes) in &all {
        let want = look_of(*sample);
        assert!(
            want.iter().any(|(_, v)| v.is_some()),
            "{classes:?}: the sample has a look"
        );
        for class in classes {
            let elements = drawn(&doc, class);
            assert!(!elements.is_empty(), "legend shows {class}, not drawn");
            for e in elements {
                assert_eq!(look_of(e), want, "{class}: drawn vs legend sample");
            }
        }
    }
    // Everything the picture holds that the legend explains has its entry, tabs drawn as the
    // legend shows them (span and diamond) included.
    let listed = legend_classes(&doc);
    for class in [
        "outline",
        "hole",
        "bay",
        "ellipse",
        "tool-path",
        "tool-band",
        "direction",
        "rapid",
        "lead-in",
        "overcut",
        "lead-out",
        "clearing",
        "tab",
        "tab-marker",
        "plunge",
        "cut-order",
        "work-zero",
    ] {
        assert!(!drawn(&doc, class).is_empty(), "{class} drawn");
        assert!(listed.iter().any(|c| c == class), "{class} in the legend");
    }
}

#[test]
fn the_legend_lists_only_what_is_drawn() {
    let f = fixture();
    let svg = render_input(&f);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let listed = legend_classes(&doc);
    for class in &listed {
        assert!(
            !drawn(&doc, class).is_empty(),
            "the legend lists {class}, the picture has none"
        );
    }
    // This fixture has no tabs, no pocket, no overcut and no lead-out.
    for class in ["tab", "tab-marker", "clearing", "overcut", "lead-out"] {
        assert!(drawn(&doc, class).is_empty(), "{class}");
        assert!(!listed.iter().any(|c| c == class), "{class} listed");
    }
    let legend = text_of(by_class(&doc, "legend")[0]);
    assert!(
        !legend.contains("tab") && !legend.contains("pocket"),
        "{legend}"
    );
    assert!(
        legend.contains("lead-in") && !legend.contains("overcut"),
        "{legend}"
    );
    // Without cuts: no path, rapid or plunge entry either.
    let svg = preview_svg(&PreviewInput {
        title: "part only",
        part: &f.part,
        ellipses: &f.ellipses,
        cuts: &[],
        tool_diameter: TOOL,
        work_zero: "the drawing's origin",
    });
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let listed = legend_classes(&doc);
    for class in ["tool-path", "tool-band", "rapid", "plunge", "cut-order"] {
        assert!(
            !listed.iter().any(|c| c == class),
            "{class} listed: {listed:?}"
        );
    }
    assert!(listed.iter().any(|c| c == "ellipse"));
}

#[test]
fn rapids_and_bays_look_different() {
    let f = fixture();
    let svg = render_input(&f);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let rapid = drawn(&doc, "rapid")[0];
    let bay = drawn(&doc, "bay")[0];
    let get = |n: roxmltree::Node, a: &str| effective(n, a).map(str::to_string);
    assert_ne!(get(rapid, "stroke"), get(bay, "stroke"), "colours");
    assert!(get(rapid, "stroke-dasharray").is_some(), "rapids dashed");
    assert_eq!(get(bay, "stroke-dasharray"), None, "bays solid");
    // The rapid's arrowhead: a marker that exists, at the rapid's middle vertex, pointing from
    // the first cut's end to the second cut's plunge point.
    let url = get(rapid, "marker-mid").expect("an arrowhead");
    let id = url
        .trim_start_matches("url(#")
        .trim_end_matches(')')
        .to_string();
    assert!(
        doc.descendants()
            .any(|n| n.tag_name().name() == "marker" && n.attribute("id") == Some(id.as_str())),
        "{id}"
    );
    let pts = polyline(rapid.attribute("d").unwrap());
    assert_eq!(pts.len(), 3);
    assert!(pts[0].distance(f.cuts[0].end()) < 1e-4);
    assert!(pts[1].distance(f.cuts[0].end().midpoint(f.cuts[1].plunge)) < 1e-4);
    assert!(pts[2].distance(f.cuts[1].plunge) < 1e-4);
    // Rendered: the bay's edge is not the rapid's colour.
    let ppm = 8.0;
    let (pixmap, vb) = raster(&svg, ppm);
    let on_bay = Point::new(80.0, 10.0);
    let (r, g, b, _) = colour_at(&pixmap, vb, ppm, on_bay);
    let teal = |r: u8, g: u8, b: u8| r < 60 && g > 100 && b > 110;
    assert!(
        !teal(r, g, b) && r > 150,
        "bay at {on_bay:?}: {:?}",
        (r, g, b)
    );
}

/// Sample points along an SVG elliptical arc from its endpoint form (W3C SVG 1.1 App. F.6.5).
#[allow(clippy::too_many_arguments)]
fn svg_arc_points(
    x1: f64,
    y1: f64,
    rx: f64,
    ry: f64,
    phi_deg: f64,
    fa: bool,
    fs: bool,
    x2: f64,
    y2: f64,
) -> Vec<(f64, f64)> {
    let (cx, cy) = svg_arc_centre(x1, y1, rx, ry, phi_deg, fa, fs, x2, y2);
    let (s, c) = phi_deg.to_radians().sin_cos();
    // Radii corrected as in F.6.6, from the start point's distance in the arc's frame.
    let local = |x: f64, y: f64| {
        let (dx, dy) = (x - cx, y - cy);
        (c * dx + s * dy, -s * dx + c * dy)
    };
    let (u1, v1) = local(x1, y1);
    let (u2, v2) = local(x2, y2);
    let scale = ((u1 / rx).powi(2) + (v1 / ry).powi(2)).sqrt().max(1.0);
    let (rx, ry) = (rx * scale, ry * scale);
    let t1 = (v1 / ry).atan2(u1 / rx);
    let mut dt = (v2 / ry).atan2(u2 / rx) - t1;
    if fs && dt < 0.0 {
        dt += TAU;
    } else if !fs && dt > 0.0 {
        dt -= TAU;
    }
    (0..=48)
        .map(|k| {
            let t = t1 + dt * k as f64 / 48.0;
            let (u, v) = (rx * t.cos(), ry * t.sin());
            (cx + c * u - s * v, cy + s * u + c * v)
        })
        .collect()
}

/// The polylines (SVG coordinates) a path's `d` draws: M, L, A (sampled) and Z.
fn path_lines(d: &str) -> Vec<Vec<(f64, f64)>> {
    let mut out: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut start = (0.0, 0.0);
    let mut at = (0.0, 0.0);
    // Commands may be glued to their first number (`M0 0`), as the work-zero mark writes them.
    let spaced: String = d
        .chars()
        .flat_map(|c| {
            if c.is_ascii_alphabetic() {
                vec![' ', c, ' ']
            } else {
                vec![c]
            }
        })
        .collect();
    for (c, v) in commands(&spaced) {
        match c {
            'M' => {
                at = (v[0], v[1]);
                start = at;
                out.push(vec![at]);
            }
            'L' => {
                at = (v[0], v[1]);
                out.last_mut().unwrap().push(at);
            }
            'A' => {
                let pts = svg_arc_points(
                    at.0,
                    at.1,
                    v[0],
                    v[1],
                    v[2],
                    v[3] == 1.0,
                    v[4] == 1.0,
                    v[5],
                    v[6],
                );
                out.last_mut().unwrap().extend(pts);
                at = (v[5], v[6]);
            }
            'Z' => {
                out.last_mut().unwrap().push(start);
                at = start;
            }
            other => panic!("unexpected command {other} in {d}"),
        }
    }
    out
}

/// A box in SVG coordinates: (x0, y0, x1, y1).
type SvgBox = (f64, f64, f64, f64);

fn grow(b: SvgBox, by: f64) -> SvgBox {
    (b.0 - by, b.1 - by, b.2 + by, b.3 + by)
}

fn boxes_meet(a: SvgBox, b: SvgBox) -> bool {
    a.0 <= b.2 && b.0 <= a.2 && a.1 <= b.3 && b.1 <= a.3
}

/// Whether the segment p–q meets the box (Liang–Barsky clipping).
fn segment_meets(p: (f64, f64), q: (f64, f64), b: SvgBox) -> bool {
    let (dx, dy) = (q.0 - p.0, q.1 - p.1);
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    for (pp, qq) in [
        (-dx, p.0 - b.0),
        (dx, b.2 - p.0),
        (-dy, p.1 - b.1),
        (dy, b.3 - p.1),
    ] {
        if pp == 0.0 {
            if qq < 0.0 {
                return false;
            }
        } else {
            let t = qq / pp;
            if pp < 0.0 {
                t0 = t0.max(t);
            } else {
                t1 = t1.min(t);
            }
        }
    }
    t0 <= t1
}

/// A text element's lines: its tspans', or its own text.
fn label_lines(n: roxmltree::Node) -> Vec<String> {
    let spans: Vec<String> = n
        .children()
        .filter(|c| c.tag_name().name() == "tspan")
        .map(text_of)
        .collect();
    if spans.is_empty() {
        vec![text_of(n)]
    } else {
        spans
    }
}

/// A text element's box, estimated here on its own: 0.6 em a character, lines 1.2 em apart,
/// centred on x and on each line's y (text-anchor and dominant-baseline middle).
fn text_box(n: roxmltree::Node) -> SvgBox {
    let attr = |k: &str| -> f64 { n.attribute(k).expect(k).parse().expect(k) };
    let fs = attr("font-size");
    let (x, y) = (attr("x"), attr("y"));
    let spans: Vec<roxmltree::Node> = n
        .children()
        .filter(|c| c.tag_name().name() == "tspan")
        .collect();
    let lines = label_lines(n);
    let step: f64 = spans
        .get(1)
        .and_then(|s| s.attribute("dy"))
        .map_or(0.0, |v| v.parse().unwrap());
    let widest = lines.iter().map(|l| l.chars().count()).max().unwrap_or(0) as f64;
    let half_w = 0.5 * widest * 0.6 * fs;
    let last = y + step * (lines.len() as f64 - 1.0);
    (x - half_w, y - 0.6 * fs, x + half_w, last + 0.6 * fs)
}

/// What each drawn element covers: polylines with their stroke's half-width, and boxes.
struct Obstacle {
    what: String,
    lines: Vec<Vec<(f64, f64)>>,
    half_width: f64,
    boxes: Vec<SvgBox>,
}

/// Every drawn element of the picture (not the legend, title or scale bar, nor the labels and
/// leaders themselves), parsed back from the SVG.
fn obstacles(doc: &roxmltree::Document) -> Vec<Obstacle> {
    let marker_width: f64 = doc
        .descendants()
        .find(|n| n.tag_name().name() == "marker")
        .and_then(|m| m.attribute("markerWidth"))
        .map_or(0.0, |v| v.parse().unwrap());
    let mut out = Vec::new();
    let picture = doc.descendants().filter(|n| {
        n.is_element()
            && n.ancestors().any(|a| {
                matches!(
                    a.attribute("class"),
                    Some("part" | "solved" | "cuts" | "work-zero")
                )
            })
    });
    for n in picture {
        let what = format!(
            "{} {}",
            effective(n, "class").unwrap_or("?"),
            n.attribute("data-name").unwrap_or("")
        );
        let sw: f64 = effective(n, "stroke-width").map_or(0.0, |v| v.parse().unwrap());
        let stroked = effective(n, "stroke").is_some_and(|s| s != "none");
        let half_width = if stroked { 0.5 * sw } else { 0.0 };
        match n.tag_name().name() {
            "path" => {
                let lines = path_lines(n.attribute("d").unwrap());
                let mut boxes = Vec::new();
                // The rapid's arrowhead at each inner vertex.
                if effective(n, "marker-mid").is_some() {
                    for l in &lines {
                        for p in &l[1..l.len() - 1] {
                            let r = 0.5 * marker_width * sw;
                            boxes.push((p.0 - r, p.1 - r, p.0 + r, p.1 + r));
                        }
                    }
                }
                // Filled shapes (arrowheads, diamonds) cover their box.
                if effective(n, "fill").is_some_and(|f| f != "none") {
                    for l in &lines {
                        let xs = l.iter().map(|p| p.0);
                        let ys = l.iter().map(|p| p.1);
                        boxes.push((
                            xs.clone().fold(f64::INFINITY, f64::min),
                            ys.clone().fold(f64::INFINITY, f64::min),
                            xs.fold(f64::NEG_INFINITY, f64::max),
                            ys.fold(f64::NEG_INFINITY, f64::max),
                        ));
                    }
                }
                out.push(Obstacle {
                    what,
                    lines,
                    half_width,
                    boxes,
                });
            }
            "circle" => {
                let a = |k: &str| -> f64 { n.attribute(k).unwrap().parse().unwrap() };
                let r = a("r") + half_width;
                out.push(Obstacle {
                    what,
                    lines: vec![],
                    half_width: 0.0,
                    boxes: vec![(a("cx") - r, a("cy") - r, a("cx") + r, a("cy") + r)],
                });
            }
            "text" => out.push(Obstacle {
                what,
                lines: vec![],
                half_width: 0.0,
                boxes: vec![text_box(n)],
            }),
            _ => {}
        }
    }
    out
}

const LABELS: [&str; 3] = ["ellipse-label", "hole-label", "cut-order"];

/// Every label's box is clear of every drawn line, marker and other label.
fn check_labels_clear(doc: &roxmltree::Document) -> usize {
    let things = obstacles(doc);
    assert!(things.len() > 10, "{} obstacles", things.len());
    let labels: Vec<(String, SvgBox)> = LABELS
        .iter()
        .flat_map(|c| by_class(doc, c))
        .map(|n| (text_of(n), text_box(n)))
        .collect();
    for (text, b) in &labels {
        for o in &things {
            let grown = grow(*b, o.half_width);
            for l in &o.lines {
                for w in l.windows(2) {
                    assert!(
                        !segment_meets(w[0], w[1], grown),
                        "label {text:?} {b:?} on {} near {:?}",
                        o.what,
                        w[0]
                    );
                }
            }
            for ob in &o.boxes {
                assert!(!boxes_meet(*b, *ob), "label {text:?} on {}", o.what);
            }
        }
    }
    for (i, (ta, a)) in labels.iter().enumerate() {
        for (tb, b) in &labels[i + 1..] {
            assert!(!boxes_meet(*a, *b), "labels {ta:?} and {tb:?} overlap");
        }
    }
    labels.len()
}

#[test]
fn labels_sit_in_free_space_with_leaders_when_moved() {
    let mut f = full_fixture();
    // A small opening whose label cannot fit inside it.
    let small = Ellipse::new(Point::new(178.0, 80.0), 7.0, 4.0, 0.3).unwrap();
    f.ellipses.push(("bay 2".into(), small));
    let svg = render_fixture(&f, Process::Tool);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    // Two ellipse labels, one hole label, two cut numbers.
    assert_eq!(check_labels_clear(&doc), 5);
    // The small ellipse's label went outside it, and a leader runs from its box to the curve.
    let label = by_class(&doc, "ellipse-label")
        .into_iter()
        .find(|n| n.attribute("data-name") == Some("bay 2"))
        .unwrap();
    let (x0, y0, x1, y1) = text_box(label);
    let centre = Point::new(0.5 * (x0 + x1), -0.5 * (y0 + y1));
    assert!(!small.contains(centre), "{centre:?}");
    let leader = by_class(&doc, "leader")
        .into_iter()
        .find(|n| n.attribute("data-name") == Some("bay 2"))
        .expect("a leader for the moved label");
    let ends = polyline(leader.attribute("d").unwrap());
    assert_eq!(ends.len(), 2);
    assert!(small.distance_to(ends[1]).0.abs() < 1e-3, "{:?}", ends[1]);
    // Its other end is at the label's box: within a generous estimate of it (0.7 em a
    // character and 0.2 em to spare), and clear of the ellipse.
    let p = (ends[0].x, -ends[0].y);
    let fs: f64 = label.attribute("font-size").unwrap().parse().unwrap();
    let chars = label_lines(label)
        .iter()
        .map(|l| l.chars().count())
        .max()
        .unwrap() as f64;
    let (mid, half) = (0.5 * (x0 + x1), 0.5 * chars * 0.7 * fs + 0.2 * fs);
    assert!((p.0 - mid).abs() <= half, "{p:?}");
    assert!(p.1 >= y0 - 0.2 * fs && p.1 <= y1 + 0.2 * fs, "{p:?}");
    assert!(!small.contains(ends[0]));
    // The drawn hole's size: its diameter.
    let hole = by_class(&doc, "hole-label");
    assert_eq!(text_of(hole[0]), "Ø16 mm");
}

#[test]
fn labels_of_the_demo_part_sit_in_free_space() {
    for stem in ["metric-mill", "laser"] {
        let out = demo_output(stem);
        let doc = roxmltree::Document::parse(&out).unwrap();
        // 4 ellipse labels, 4 fixing holes' sizes, 9 cut numbers.
        assert_eq!(check_labels_clear(&doc), 17, "{stem}");
    }
}

/// The demo part's preview on the bundled profile `stem`.
fn demo_output(stem: &str) -> String {
    let machine = machine(stem);
    let tool = if stem == "laser" { None } else { Some(6.0) };
    let s = conicut::pipeline::JobSettings {
        margin: 4.0,
        depth: Some(conicut::demo::CUT_DEPTH),
        tool_diameter: tool,
        ..conicut::pipeline::JobSettings::new("truss-bracket.dxf", 6.0)
    };
    conicut::pipeline::run_job(&conicut::demo::demo_dxf_bytes(), &machine, &s)
        .expect("the demo runs")
        .preview
}

#[path = "support/machine.rs"]
mod machine_support;
use machine_support::machine;

#[test]
fn cut_numbers_follow_the_program_order() {
    let f = full_fixture();
    let svg = render_fixture(&f, Process::Tool);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let numbers = drawn(&doc, "cut-order");
    assert_eq!(numbers.len(), f.cuts.len());
    for (k, (n, cut)) in numbers.iter().zip(&f.cuts).enumerate() {
        assert_eq!(text_of(*n), (k + 1).to_string());
        assert_eq!(
            n.attribute("data-order"),
            Some((k + 1).to_string().as_str())
        );
        assert_eq!(n.attribute("data-name"), Some(cut.name.as_str()));
        // Beside the cut's start: within a few text heights of its plunge point.
        let (x0, y0, x1, y1) = text_box(*n);
        let at = Point::new(0.5 * (x0 + x1), -0.5 * (y0 + y1));
        let fs: f64 = n.attribute("font-size").unwrap().parse().unwrap();
        assert!(at.distance(cut.plunge) < 6.0 * fs, "{}: {at:?}", cut.name);
    }
    // A sheet's worth: numbers 1..N, each once, in cut order.
    let out = demo_output("metric-mill");
    let doc = roxmltree::Document::parse(&out).unwrap();
    let got: Vec<usize> = drawn(&doc, "cut-order")
        .iter()
        .map(|n| text_of(*n).parse().unwrap())
        .collect();
    assert_eq!(got, (1..=9).collect::<Vec<_>>());
}

/// A `w` × `h` plate with a 9 mm hole at its middle, cut by a 6 mm tool (its centre on a
/// 3 mm circle).
fn nine_mm_hole(w: f64, h: f64) -> (Part, FittedCut) {
    let c = Point::new(0.5 * w, 0.5 * h);
    let outline = Contour::new(
        vec![
            line(Point::new(0.0, 0.0), Point::new(w, 0.0)),
            line(Point::new(w, 0.0), Point::new(w, h)),
            line(Point::new(w, h), Point::new(0.0, h)),
            line(Point::new(0.0, h), Point::new(0.0, 0.0)),
        ],
        "CUT",
        vec![],
    )
    .unwrap();
    let hole = InnerBoundary {
        name: "hole 1".into(),
        layer: "CUT".into(),
        shape: InnerShape::Contour(
            Contour::new(
                vec![Element::Arc(ArcSegment::circle(c, 4.5))],
                "CUT",
                vec![],
            )
            .unwrap(),
        ),
    };
    let path: Vec<Point> = (0..=48)
        .map(|i| {
            let t = i as f64 * TAU / 48.0;
            Point::new(c.x + 1.5 * t.cos(), c.y + 1.5 * t.sin())
        })
        .collect();
    let cut = FittedCut::from_points(
        "hole 1",
        FeatureKind::Hole,
        CutSide::Inside,
        c,
        &path,
        0.05,
        0.01,
    );
    let part = Part {
        outline: Some(outline),
        holes: vec![hole],
        ..Part::default()
    };
    (part, cut)
}

/// The length of an arrowhead `M tip L back+side L back−side Z`: tip to the back's middle.
fn arrow_length(d: &str) -> f64 {
    let p = polyline(d);
    p[0].distance(p[1].midpoint(p[2]))
}

#[test]
fn a_nine_mm_hole_keeps_readable_markers_that_fit_it() {
    // Readable on a 1:1 print: an arrowhead at least 1.5 mm long; fitting the feature: no longer
    // than the 3 mm circle the tool centre follows, and an entry marker well inside the hole.
    // On a 1000 mm plate (text at its largest) and on a 40 mm one (text at its smallest).
    for (w, h) in [(1000.0, 600.0), (40.0, 30.0)] {
        let (part, cut) = nine_mm_hole(w, h);
        let cuts = [cut];
        let svg = preview_svg(&PreviewInput {
            title: "nine",
            part: &part,
            ellipses: &[],
            cuts: &cuts,
            tool_diameter: 6.0,
            work_zero: "the drawing's origin",
        });
        let doc = roxmltree::Document::parse(&svg).unwrap();
        let arrows = drawn(&doc, "direction");
        assert_eq!(arrows.len(), 2);
        for a in arrows {
            let len = arrow_length(a.attribute("d").unwrap());
            assert!((1.5..=3.0).contains(&len), "{w} mm plate: arrow {len} mm");
        }
        let marker = drawn(&doc, "plunge")[0];
        let r: f64 = marker.attribute("r").unwrap().parse().unwrap();
        assert!(
            (0.5..=0.5 * 4.5).contains(&r),
            "{w} mm plate: marker radius {r}"
        );
        let label = drawn(&doc, "hole-label");
        assert_eq!(text_of(label[0]), "Ø9 mm");
        let fs: f64 = label[0].attribute("font-size").unwrap().parse().unwrap();
        assert!(fs >= 1.5, "{fs}");
    }
}

#[test]
fn cut_through_kinds_speak_of_kerf_and_pierce() {
    let f = full_fixture();
    let words = |svg: &str| -> String {
        let doc = roxmltree::Document::parse(svg).unwrap();
        doc.descendants()
            .filter(|n| n.is_text())
            .filter_map(|n| n.text())
            .collect::<Vec<_>>()
            .join(" | ")
    };
    let thermal = words(&render_fixture(&f, Process::CutThrough));
    for w in ["kerf path", "pierce point", "kerf width 6.00 mm"] {
        assert!(thermal.contains(w), "{w}: {thermal}");
    }
    for w in ["tool", "plunge"] {
        assert!(!thermal.contains(w), "{w}: {thermal}");
    }
    let mill = words(&render_fixture(&f, Process::Tool));
    for w in ["tool centre path", "plunge point", "tool diameter 6.00 mm"] {
        assert!(mill.contains(w), "{w}: {mill}");
    }
    assert!(!mill.contains("kerf") && !mill.contains("pierce"), "{mill}");
}

#[test]
fn a_kerf_path_is_told_from_the_ellipse_it_sits_on() {
    // A 0.2 mm kerf: the path runs 0.1 mm inside the ellipse. The ellipse is drawn wide under a
    // thin path, so both show: the path's colour on the curve's inside, the ellipse's on either
    // side of it.
    let e = opening();
    let n = 360;
    let path: Vec<Point> = (0..=n)
        .map(|i| e.inward_offset_point(i as f64 * TAU / n as f64, 0.1))
        .collect();
    let cut = FittedCut::from_points(
        "bay 1",
        FeatureKind::Opening,
        CutSide::Inside,
        e.centre(),
        &path,
        0.05,
        0.01,
    );
    let part = plate();
    let ellipses = [("bay 1".to_string(), e)];
    let cuts = [cut];
    let svg = preview_svg_with(
        &PreviewInput {
            title: "laser",
            part: &part,
            ellipses: &ellipses,
            cuts: &cuts,
            tool_diameter: 0.2,
            work_zero: "the drawing's origin",
        },
        &PreviewOptions {
            process: Process::CutThrough,
        },
    );
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let width = |class: &str| -> f64 {
        effective(drawn(&doc, class)[0], "stroke-width")
            .unwrap()
            .parse()
            .unwrap()
    };
    let (casing, line) = (width("ellipse"), width("tool-path"));
    assert!(casing > 3.0 * line, "{casing} vs {line}");
    // The ellipse comes first in the document, the path over it.
    let order: Vec<&str> = doc
        .descendants()
        .filter_map(|n| n.attribute("class"))
        .filter(|c| *c == "ellipse" || *c == "tool-path")
        .collect();
    assert_eq!(order, ["ellipse", "tool-path"]);
    let ppm = 16.0;
    let (pixmap, vb) = raster(&svg, ppm);
    let is_blue = |(r, g, b, a): (u8, u8, u8, u8)| a == 255 && b > 150 && r < 90 && g < 140;
    let is_orange = |(r, g, b, a): (u8, u8, u8, u8)| a == 255 && r > 150 && g < 130 && b < 80;
    for t in [FRAC_PI_2, 3.0 * FRAC_PI_2, 1.0] {
        let on = e.inward_offset_point(t, 0.1);
        let out = e.outward_normal(t);
        assert!(is_blue(colour_at(&pixmap, vb, ppm, on)), "path at t = {t}");
        for side in [0.45 * casing, -0.35 * casing] {
            let p = e.point(t) + out * side;
            assert!(
                is_orange(colour_at(&pixmap, vb, ppm, p)),
                "ellipse at t = {t}, {side}: {:?}",
                colour_at(&pixmap, vb, ppm, p)
            );
        }
    }
}
