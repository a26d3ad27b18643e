//! SVG preview: the part, its bays, the solved ellipses with their sizes, and the tool-centre
//! paths with their direction and plunge points, on one page drawn at 1:1 in millimetres.
//!
//! # Units and orientation
//!
//! One SVG user unit is one millimetre, and the root element's `width` and `height` are given in
//! mm, so the page prints at 1:1. The drawing's y axis points up; SVG's points down, so every
//! point is drawn at `(x, −y)`. A reader recovers drawing coordinates as
//! `(x_svg, −y_svg)`.
//!
//! # What is drawn, and how to find it
//!
//! Every element carries a `class` naming what it is, and features carry `data-name`:
//! `outline`, `hole`, `bay`, `ellipse` (two `A` arcs, exact), `ellipse-label`, `tool-band` (the
//! width the tool sweeps, translucent), `tool-path` (the tool centre along the contour, from its
//! start round to it), `clearing` (a pocket's clearing rings and links, from the plunge point),
//! `lead-in` (from the plunge point, or the clearing's end, to the contour's start), `overcut`
//! (the contour's first stretch cut again), `lead-out`, `direction` (arrowheads), `rapid`,
//! `plunge` (circles at the plunge points), `tab` (the stretch of the tool-centre path left
//! uncut, `data-from` and `data-to` its ends in mm along the contour from its start),
//! `tab-marker` (a diamond at each tab's middle), `scale-bar`, `legend`, `title`.

mod frame;
mod shapes;

use crate::chain::{InnerShape, Part};
use crate::fit::FittedCut;
use crate::geom::Move;
use crate::geom::{Ellipse, Point, Vec2};
use frame::{Bounds, Frame, num, scale_bar_length};
use shapes::{arrow_d, arrow_spots, contour_d, ellipse_bounds, ellipse_d, moves_d, polyline_d};
use svg::Document;
use svg::node::element::{Circle, Group, Line, Path, Rectangle, TSpan, Text, Title};

/// What the preview shows.
#[derive(Debug, Clone, Copy)]
pub struct PreviewInput<'a> {
    pub title: &'a str,
    pub part: &'a Part,
    /// Solved openings: the bay's name and its ellipse.
    pub ellipses: &'a [(String, Ellipse)],
    pub cuts: &'a [FittedCut],
    /// Tool diameter (mm), drawn as a translucent band along each tool path; 0 for none.
    pub tool_diameter: f64,
    /// Where the program's X0 Y0 is on the part, in words (`the lower-left corner of the
    /// outline's box`); the picture is in program coordinates, so X0 Y0 is its origin, marked
    /// by two axes.
    pub work_zero: &'a str,
}

/// The tool-centre path as points, for the bounds and the direction arrows (the path itself is
/// drawn exactly, arcs as arcs): every move's end, and 24 points inside each arc.
fn drawn_path(cut: &FittedCut) -> Vec<Point> {
    crate::geom::moves::sample(cut.start, &cut.moves, 24)
}

/// Every move the tool makes at feed for `cut`, each run with the point it starts from: the
/// clearing, the lead-in, the contour, the overcut and the lead-out, with the class each is
/// drawn with.
fn runs(cut: &FittedCut) -> [(&'static str, Point, &[Move]); 5] {
    [
        ("clearing", cut.plunge, &cut.clearing),
        ("lead-in", cut.lead_in_start(), &cut.lead_in),
        ("tool-path", cut.start, &cut.moves),
        ("overcut", cut.start, &cut.overcut),
        ("lead-out", cut.lead_out_start(), &cut.lead_out),
    ]
}

/// The stretch of the run `moves` from `start` between the distances `from` and `to` along it
/// (mm): its first point and its moves. `None` when the stretch is empty.
fn stretch(start: Point, moves: &[Move], from: f64, to: f64) -> Option<(Point, Vec<Move>)> {
    if from.is_nan() || to.is_nan() || from >= to {
        return None;
    }
    let pieces = crate::geom::moves::split_at(start, moves, &[from, to]);
    let mut at = start;
    let mut walked = 0.0;
    for piece in pieces {
        let len = crate::geom::moves::total_length(at, &piece);
        let mid = walked + 0.5 * len;
        if len > 0.0 && mid > from && mid < to {
            return Some((at, piece));
        }
        walked += len;
        at = piece.last().map_or(at, Move::end);
    }
    None
}

/// The point at distance `dist` (mm) along the run `moves` from `start`, and the direction of
/// travel there.
fn point_along(start: Point, moves: &[Move], dist: f64) -> Option<(Point, Vec2)> {
    let mut from = start;
    let mut walked = 0.0;
    for m in moves {
        let len = m.length(from);
        if len > 0.0 && dist <= walked + len {
            let t = ((dist - walked) / len).clamp(0.0, 1.0);
            let p = m.point_at(from, t);
            let ahead = m.point_at(from, (t + 1e-3).min(1.0));
            let behind = m.point_at(from, (t - 1e-3).max(0.0));
            let dir = (ahead - behind).normalized()?;
            return p.is_finite().then_some((p, dir));
        }
        walked += len;
        from = m.end();
    }
    None
}

/// Colours of our own choosing.
mod palette {
    pub const BACKGROUND: &str = "#ffffff";
    pub const PART: &str = "#1d2733";
    pub const BAY: &str = "#8a949e";
    pub const ELLIPSE: &str = "#c0531a";
    pub const TOOL: &str = "#1a62b8";
    pub const RAPID: &str = "#6f7a85";
    pub const PLUNGE: &str = "#b0157a";
    pub const LEAD: &str = "#1a9a6c";
    pub const CLEARING: &str = "#8d74c4";
    pub const TAB: &str = "#e8a300";
    pub const ORIGIN: &str = "#a4161a";
    pub const TEXT: &str = "#1d2733";
}

/// The preview as an SVG document.
///
/// Pure: the same input gives the same text. Non-finite points are left out rather than written.
pub fn preview_svg(input: &PreviewInput) -> String {
    let content = content_bounds(input).unwrap_or(Bounds {
        min: Point::new(0.0, 0.0),
        max: Point::new(100.0, 100.0),
    });
    let frame = Frame::around(content);
    let u = frame.unit();

    let mut doc = Document::new()
        .set(
            "viewBox",
            format!(
                "{} {} {} {}",
                num(frame.view_x),
                num(frame.view_y),
                num(frame.view_w),
                num(frame.view_h)
            ),
        )
        .set("width", format!("{}mm", num(frame.view_w)))
        .set("height", format!("{}mm", num(frame.view_h)))
        .set("font-family", "sans-serif")
        .add(Title::new(format!("conicut preview: {}", input.title)))
        .add(
            Rectangle::new()
                .set("class", "background")
                .set("x", num(frame.view_x))
                .set("y", num(frame.view_y))
                .set("width", num(frame.view_w))
                .set("height", num(frame.view_h))
                .set("fill", palette::BACKGROUND),
        );

    doc = doc.add(part_group(input.part, u));
    doc = doc.add(cut_group(input, &frame));
    doc = doc.add(ellipse_group(input.ellipses, &frame));
    if origin_in_view(&frame) {
        doc = doc.add(origin_group(&frame));
    }
    doc = doc.add(title_group(input, &frame));
    doc = doc.add(scale_bar(&frame));
    doc = doc.add(legend(&frame));
    doc.to_string()
}

/// Bounds of everything drawn, in drawing mm.
fn content_bounds(input: &PreviewInput) -> Option<Bounds> {
    let mut pts: Vec<Point> = Vec::new();
    if let Some(outline) = &input.part.outline
        && let Some((lo, hi)) = outline.bounds()
    {
        pts.extend([lo, hi]);
    }
    for hole in &input.part.holes {
        match &hole.shape {
            InnerShape::Contour(c) => {
                if let Some((lo, hi)) = c.bounds() {
                    pts.extend([lo, hi]);
                }
            }
            InnerShape::Ellipse(e) => pts.extend(ellipse_bounds(e)),
        }
    }
    for bay in &input.part.bays {
        pts.extend(bay.corners());
    }
    for (_, e) in input.ellipses {
        pts.extend(ellipse_bounds(e));
    }
    let r = if input.tool_diameter.is_finite() {
        0.5 * input.tool_diameter.max(0.0)
    } else {
        0.0
    };
    // The work zero is drawn when it lies near the part (within half the part's size); a
    // zero far away would shrink the part to a speck, and the title says where it is instead.
    if let Some(b) = Bounds::of(pts.iter().copied()) {
        let reach = 0.5 * b.width().max(b.height());
        let gap_x = (b.min.x - 0.0).max(0.0 - b.max.x).max(0.0);
        let gap_y = (b.min.y - 0.0).max(0.0 - b.max.y).max(0.0);
        if gap_x <= reach && gap_y <= reach {
            pts.push(Point::ORIGIN);
        }
    }
    for cut in input.cuts {
        let mut path = vec![cut.plunge];
        for (_, from, moves) in runs(cut) {
            path.extend(crate::geom::moves::sample(from, moves, 24));
        }
        for p in &path {
            pts.push(Point::new(p.x - r, p.y - r));
            pts.push(Point::new(p.x + r, p.y + r));
        }
    }
    Bounds::of(pts)
}

fn part_group(part: &Part, u: f64) -> Group {
    let mut g = Group::new().set("class", "part");
    for bay in &part.bays {
        g = g.add(
            Path::new()
                .set("class", "bay")
                .set("data-name", bay.name())
                .set("d", polyline_d(bay.corners(), true))
                .set("fill", "none")
                .set("stroke", palette::BAY)
                .set("stroke-width", num(1.2 * u))
                .set(
                    "stroke-dasharray",
                    format!("{} {}", num(6.0 * u), num(4.0 * u)),
                ),
        );
    }
    if let Some(outline) = &part.outline {
        g = g.add(
            Path::new()
                .set("class", "outline")
                .set("d", contour_d(outline))
                .set("fill", "none")
                .set("stroke", palette::PART)
                .set("stroke-width", num(2.5 * u))
                .set("stroke-linejoin", "round"),
        );
    }
    for hole in &part.holes {
        let d = match &hole.shape {
            InnerShape::Contour(c) => contour_d(c),
            InnerShape::Ellipse(e) => ellipse_d(e),
        };
        g = g.add(
            Path::new()
                .set("class", "hole")
                .set("data-name", hole.name.as_str())
                .set("d", d)
                .set("fill", "none")
                .set("stroke", palette::PART)
                .set("stroke-width", num(2.5 * u))
                .set("stroke-linejoin", "round"),
        );
    }
    g
}

fn ellipse_group(ellipses: &[(String, Ellipse)], frame: &Frame) -> Group {
    let u = frame.unit();
    let mut g = Group::new().set("class", "solved");
    for (name, e) in ellipses {
        g = g.add(
            Path::new()
                .set("class", "ellipse")
                .set("data-name", name.as_str())
                .set("d", ellipse_d(e))
                .set("fill", "none")
                .set("stroke", palette::ELLIPSE)
                .set("stroke-width", num(2.0 * u)),
        );
        // Three short lines centred in the ellipse, small enough to fit across it: the
        // half-width of the ellipse along x is ab / sqrt(b² cos²θ + a² sin²θ), and a character
        // is taken as 0.6 em wide.
        let lines = [
            name.clone(),
            format!("{} × {} mm", fixed(2.0 * e.a(), 2), fixed(2.0 * e.b(), 2)),
            format!("at {}°", fixed(e.angle().to_degrees(), 1)),
        ];
        let (s, c) = e.angle().sin_cos();
        let half_width = e.a() * e.b() / ((e.b() * c).powi(2) + (e.a() * s).powi(2)).sqrt();
        let widest = lines.iter().map(|l| l.chars().count()).max().unwrap_or(1) as f64;
        let font = frame.font.min(0.85 * 2.0 * half_width / (0.6 * widest));
        let (x, y) = frame.svg_xy(e.centre());
        let mut text = Text::new("")
            .set("class", "ellipse-label")
            .set("data-name", name.as_str())
            .set("x", num(x))
            .set("y", num(y - 1.2 * font))
            .set("font-size", num(font))
            .set("text-anchor", "middle")
            .set("dominant-baseline", "middle")
            .set("fill", palette::ELLIPSE)
            .set("stroke", palette::BACKGROUND)
            .set("stroke-width", num(0.25 * font))
            .set("paint-order", "stroke");
        for (i, line) in lines.iter().enumerate() {
            text = text.add(TSpan::new(line.as_str()).set("x", num(x)).set(
                "dy",
                if i == 0 {
                    "0".to_string()
                } else {
                    num(1.2 * font)
                },
            ));
        }
        g = g.add(text);
    }
    g
}

fn cut_group(input: &PreviewInput, frame: &Frame) -> Group {
    let u = frame.unit();
    let mut bands = Group::new()
        .set("class", "tool-bands")
        .set("fill", "none")
        .set("stroke", palette::TOOL)
        .set("stroke-opacity", "0.15")
        .set("stroke-linejoin", "round")
        .set("stroke-linecap", "round");
    let mut paths = Group::new().set("class", "tool-paths");
    let show_band = input.tool_diameter.is_finite() && input.tool_diameter > 0.0;
    let mut previous_end: Option<Point> = None;
    for cut in input.cuts {
        if show_band {
            bands = bands.add(tool_band(cut, input.tool_diameter));
        }
        if let Some(from) = previous_end
            && from.is_finite()
            && cut.plunge.is_finite()
        {
            paths = paths.add(rapid(from, cut.plunge, u));
        }
        paths = run_paths(paths, cut, u);
        paths = tab_marks(paths, cut, u);
        paths = direction_arrows(paths, cut, u);
        paths = plunge_marks(paths, cut, frame, u);
        previous_end = Some(cut.end());
    }
    Group::new().set("class", "cuts").add(bands).add(paths)
}

/// The band the tool sweeps along the contour of `cut`, `diameter` wide.
fn tool_band(cut: &FittedCut, diameter: f64) -> Path {
    Path::new()
        .set("class", "tool-band")
        .set("data-name", cut.name.as_str())
        .set("d", moves_d(None, cut.start, &cut.moves))
        .set("stroke-width", num(diameter))
}

/// The rapid from the end of one cut to the plunge point of the next, dashed.
fn rapid(from: Point, to: Point, u: f64) -> Path {
    Path::new()
        .set("class", "rapid")
        .set("d", polyline_d(&[from, to], false))
        .set("fill", "none")
        .set("stroke", palette::RAPID)
        .set("stroke-width", num(u))
        .set(
            "stroke-dasharray",
            format!("{} {}", num(3.0 * u), num(3.0 * u)),
        )
}

/// Adds the runs of `cut` to `g`: the clearing and the lead-in, the contour, then the overcut and
/// the lead-out.
fn run_paths(mut g: Group, cut: &FittedCut, u: f64) -> Group {
    for (class, from, moves) in runs(cut) {
        if moves.is_empty() {
            continue;
        }
        let (colour, width) = match class {
            "tool-path" => (palette::TOOL, 1.5 * u),
            "clearing" => (palette::CLEARING, 1.2 * u),
            _ => (palette::LEAD, 1.5 * u),
        };
        g = g.add(
            Path::new()
                .set("class", class)
                .set("data-name", cut.name.as_str())
                .set("d", moves_d(None, from, moves))
                .set("fill", "none")
                .set("stroke", colour)
                .set("stroke-width", num(width))
                .set("stroke-linejoin", "round"),
        );
    }
    g
}

/// Adds arrows showing the direction of travel of `cut` to `g`, at 20 % and 70 % of its path.
fn direction_arrows(mut g: Group, cut: &FittedCut, u: f64) -> Group {
    let path = drawn_path(cut);
    for (at, dir) in arrow_spots(&path, &[0.2, 0.7]) {
        g = g.add(
            Path::new()
                .set("class", "direction")
                .set("data-name", cut.name.as_str())
                .set("d", arrow_d(at, dir, 9.0 * u))
                .set("fill", palette::TOOL),
        );
    }
    g
}

/// Adds the plunge point of `cut` to `g`: a ring and its centre dot.
fn plunge_marks(mut g: Group, cut: &FittedCut, frame: &Frame, u: f64) -> Group {
    if !cut.plunge.is_finite() {
        return g;
    }
    let (x, y) = frame.svg_xy(cut.plunge);
    g = g.add(
        Circle::new()
            .set("class", "plunge")
            .set("data-name", cut.name.as_str())
            .set("cx", num(x))
            .set("cy", num(y))
            .set("r", num(4.0 * u))
            .set("fill", palette::BACKGROUND)
            .set("fill-opacity", "0.6")
            .set("stroke", palette::PLUNGE)
            .set("stroke-width", num(1.5 * u)),
    );
    g.add(
        Circle::new()
            .set("class", "plunge-centre")
            .set("cx", num(x))
            .set("cy", num(y))
            .set("r", num(1.2 * u))
            .set("fill", palette::PLUNGE),
    )
}

/// Adds each tab of `cut` to `g`: the uncut stretch of the tool-centre path drawn over it, wide
/// and in the tab colour, and a diamond at its middle.
fn tab_marks(mut g: Group, cut: &FittedCut, u: f64) -> Group {
    for &(from, to) in &cut.tabs {
        if let Some((at, moves)) = stretch(cut.start, &cut.moves, from, to) {
            g = g.add(
                Path::new()
                    .set("class", "tab")
                    .set("data-name", cut.name.as_str())
                    .set("data-from", num(from))
                    .set("data-to", num(to))
                    .set("d", moves_d(None, at, &moves))
                    .set("fill", "none")
                    .set("stroke", palette::TAB)
                    .set("stroke-width", num(5.0 * u))
                    .set("stroke-linecap", "butt"),
            );
        }
        if let Some((mid, dir)) = point_along(cut.start, &cut.moves, 0.5 * (from + to)) {
            g = g.add(
                Path::new()
                    .set("class", "tab-marker")
                    .set("data-name", cut.name.as_str())
                    .set("d", diamond_d(mid, dir, 5.0 * u))
                    .set("fill", palette::TAB)
                    .set("stroke", palette::PART)
                    .set("stroke-width", num(0.8 * u))
                    .add(Title::new(format!(
                        "tab: {} mm of the tool-centre path left uncut",
                        fixed(to - from, 2)
                    ))),
            );
        }
    }
    g
}

/// `d` for a diamond centred on `at` with one diagonal along `dir`, `half` from the centre to
/// each corner.
fn diamond_d(at: Point, dir: Vec2, half: f64) -> String {
    let along = dir * half;
    let across = dir.perp() * half;
    polyline_d(&[at + along, at + across, at - along, at - across], true)
}

fn title_group(input: &PreviewInput, frame: &Frame) -> Group {
    let x = frame.view_x + 1.0 * frame.font;
    let y = frame.view_y + 1.6 * frame.font;
    let mut subtitle = format!(
        "{} cut{}, {} solved ellipse{}",
        input.cuts.len(),
        plural(input.cuts.len()),
        input.ellipses.len(),
        plural(input.ellipses.len())
    );
    if input.tool_diameter.is_finite() && input.tool_diameter > 0.0 {
        subtitle.push_str(&format!(
            ", tool diameter {} mm",
            fixed(input.tool_diameter, 2)
        ));
    }
    subtitle.push_str("; dimensions in mm, drawn 1:1; X0 Y0 = ");
    subtitle.push_str(input.work_zero);
    if !origin_in_view(frame) {
        subtitle.push_str(" (outside this view)");
    }
    Group::new()
        .set("class", "title")
        .set("fill", palette::TEXT)
        .add(
            Text::new(input.title)
                .set("x", num(x))
                .set("y", num(y))
                .set("font-size", num(1.3 * frame.font))
                .set("font-weight", "bold"),
        )
        .add(
            Text::new(subtitle)
                .set("x", num(x))
                .set("y", num(y + 1.3 * frame.font))
                .set("font-size", num(0.8 * frame.font)),
        )
}

fn scale_bar(frame: &Frame) -> Group {
    let u = frame.unit();
    let length = scale_bar_length(frame.content.width().max(frame.content.height()));
    let x0 = frame.view_x + frame.font;
    let y = frame.legend_top + 1.0 * frame.font;
    let tick = 0.5 * frame.font;
    let mut g = Group::new()
        .set("class", "scale-bar")
        .set("stroke", palette::TEXT)
        .set("stroke-width", num(1.5 * u));
    g = g.add(line(x0, y, x0 + length, y));
    for x in [x0, x0 + 0.5 * length, x0 + length] {
        g = g.add(line(x, y - tick, x, y));
    }
    g.add(
        Text::new(format!("{} mm", num(length)))
            .set("x", num(x0 + length + 0.5 * frame.font))
            .set("y", num(y))
            .set("font-size", num(0.8 * frame.font))
            .set("stroke", "none")
            .set("fill", palette::TEXT),
    )
}

fn line(x1: f64, y1: f64, x2: f64, y2: f64) -> Line {
    Line::new()
        .set("x1", num(x1))
        .set("y1", num(y1))
        .set("x2", num(x2))
        .set("y2", num(y2))
}

fn legend(frame: &Frame) -> Group {
    let u = frame.unit();
    let f = frame.font;
    let dash = format!("{} {}", num(6.0 * u), num(4.0 * u));
    // (label, colour, stroke width, dashed, opacity); the plunge marker is drawn last.
    let items: [(&str, &str, f64, bool, f64); 9] = [
        ("part and holes", palette::PART, 2.5 * u, false, 1.0),
        ("bay (construction)", palette::BAY, 1.2 * u, true, 1.0),
        ("solved ellipse", palette::ELLIPSE, 2.0 * u, false, 1.0),
        ("tool centre path", palette::TOOL, 1.5 * u, false, 1.0),
        ("width the tool cuts", palette::TOOL, 0.8 * f, false, 0.15),
        ("rapid move", palette::RAPID, u, true, 1.0),
        (
            "lead-in, overcut, lead-out",
            palette::LEAD,
            1.5 * u,
            false,
            1.0,
        ),
        ("pocket clearing", palette::CLEARING, 1.2 * u, false, 1.0),
        ("tab (left uncut)", palette::TAB, 5.0 * u, false, 1.0),
    ];
    let top = frame.legend_top + 2.5 * f;
    let column = 0.5 * frame.view_w;
    let spot = |i: usize| {
        (
            frame.view_x + f + (i % 2) as f64 * column,
            top + (i / 2) as f64 * 1.6 * f,
        )
    };
    let label = |text: &str, x: f64, y: f64| {
        Text::new(text)
            .set("x", num(x + 3.6 * f))
            .set("y", num(y))
            .set("font-size", num(0.8 * f))
            .set("dominant-baseline", "middle")
            .set("fill", palette::TEXT)
    };
    let mut g = Group::new().set("class", "legend");
    for (i, (text, colour, width, dashed, opacity)) in items.into_iter().enumerate() {
        let (x, y) = spot(i);
        let mut sample = line(x, y, x + 3.0 * f, y)
            .set("stroke", colour)
            .set("stroke-width", num(width))
            .set("stroke-opacity", num(opacity));
        if dashed {
            sample = sample.set("stroke-dasharray", dash.as_str());
        }
        g = g.add(sample).add(label(text, x, y));
    }
    let (x, y) = spot(items.len());
    g = g
        .add(
            Circle::new()
                .set("cx", num(x + 1.5 * f))
                .set("cy", num(y))
                .set("r", num(4.0 * u))
                .set("fill", palette::BACKGROUND)
                .set("stroke", palette::PLUNGE)
                .set("stroke-width", num(1.5 * u)),
        )
        .add(
            Circle::new()
                .set("cx", num(x + 1.5 * f))
                .set("cy", num(y))
                .set("r", num(1.2 * u))
                .set("fill", palette::PLUNGE),
        )
        .add(label("plunge point", x, y));
    if origin_in_view(frame) {
        // The same mark as in the picture, smaller, its corner low in the sample's box.
        let (x, y) = spot(items.len() + 1);
        let mark = Group::new()
            .set("stroke", palette::ORIGIN)
            .set("stroke-width", num(1.5 * u))
            .set("fill", "none")
            .add(axes_mark(x + 0.6 * f, y + 0.4 * f, 0.9 * f, u));
        g = g.add(mark).add(label("work zero X0 Y0", x, y));
    }
    g
}

/// Whether the program's origin lies inside the drawn content (see [`content_bounds`]).
fn origin_in_view(frame: &Frame) -> bool {
    let c = &frame.content;
    c.min.x <= 0.0 && 0.0 <= c.max.x && c.min.y <= 0.0 && 0.0 <= c.max.y
}

/// The work zero: a ring at X0 Y0 and arrows along +X and +Y, three text heights long, each
/// named by its letter.
fn origin_group(frame: &Frame) -> Group {
    let u = frame.unit();
    let f = frame.font;
    let length = 3.0 * f;
    let mut g = Group::new()
        .set("class", "work-zero")
        .set("stroke", palette::ORIGIN)
        .set("stroke-width", num(1.5 * u))
        .set("fill", "none");
    g = g.add(axes_mark(0.0, 0.0, length, u));
    for (text, x, y) in [("X", length + 0.4 * f, 0.0), ("Y", 0.0, -length - 0.5 * f)] {
        g = g.add(
            Text::new(text)
                .set("x", num(x))
                .set("y", num(y))
                .set("font-size", num(0.8 * f))
                .set("text-anchor", "middle")
                .set("dominant-baseline", "middle")
                .set("stroke", "none")
                .set("fill", palette::ORIGIN),
        );
    }
    g
}

/// Two arrows from the SVG point `(x, y)`, `length` along +X (right) and +Y (up, SVG −y), and a
/// ring at the corner: the work-zero mark, in the picture and in the legend.
fn axes_mark(x: f64, y: f64, length: f64, u: f64) -> Group {
    let head = 0.25 * length;
    let arrow_x = format!(
        "M{} {} L{} {} M{} {} L{} {} L{} {}",
        num(x),
        num(y),
        num(x + length),
        num(y),
        num(x + length - head),
        num(y - 0.5 * head),
        num(x + length),
        num(y),
        num(x + length - head),
        num(y + 0.5 * head)
    );
    let arrow_y = format!(
        "M{} {} L{} {} M{} {} L{} {} L{} {}",
        num(x),
        num(y),
        num(x),
        num(y - length),
        num(x - 0.5 * head),
        num(y - length + head),
        num(x),
        num(y - length),
        num(x + 0.5 * head),
        num(y - length + head)
    );
    Group::new()
        .add(Path::new().set("d", arrow_x))
        .add(Path::new().set("d", arrow_y))
        .add(
            Circle::new()
                .set("cx", num(x))
                .set("cy", num(y))
                .set("r", num(3.0 * u)),
        )
}

fn fixed(v: f64, decimals: usize) -> String {
    let s = format!("{v:.decimals$}");
    if s.starts_with('-') && s[1..].bytes().all(|c| c == b'0' || c == b'.') {
        s[1..].to_string()
    } else {
        s
    }
}

fn plural(n: usize) -> &'static str {
    if n == 1 { "" } else { "s" }
}
