//! The SVG preview is well-formed XML, covers the part, draws each solved ellipse exactly, shows
//! every cut and plunge point, and renders (resvg) with the tool paths and ellipses in place.

use conicut::chain::{Bay, InnerBoundary, InnerShape, Part};
use conicut::fit::FittedCut;
use conicut::geom::{ArcSegment, Ellipse, Point, Segment};
use conicut::geom::{Contour, Element};
use conicut::plan::{CutSide, FeatureKind};
use conicut::preview::{PreviewInput, preview_svg};
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
    // The label gives the full axes and the angle.
    let label = by_class(&doc, "ellipse-label")[0];
    let text: Vec<&str> = label
        .descendants()
        .filter(|n| n.is_text())
        .filter_map(|n| n.text())
        .flat_map(|t| t.split_whitespace())
        .collect();
    assert_eq!(text.join(" "), "bay 1 110.00 × 70.00 mm at 20.0°");
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
