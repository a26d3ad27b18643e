//! SVG preview: the part, its bays, the solved ellipses with their sizes, and the tool-centre
//! (or kerf) paths with their direction, entry points and cut order, on one page drawn at 1:1 in
//! millimetres.
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
//! `outline`, `hole`, `bay` (thin, solid, construction colour), `ellipse` (two `A` arcs, exact),
//! `tool-band` (the width the tool or kerf sweeps, translucent), `tool-path` (the tool centre
//! along the contour, from its start round to it), `clearing` (a pocket's clearing rings and
//! links, from the plunge point), `lead-in` (from the plunge point, or the clearing's end, to the
//! contour's start), `overcut` (the contour's first stretch cut again), `lead-out`, `direction`
//! (arrowheads), `rapid` (dashed, an arrowhead at its middle), `plunge` (a disc at each plunge or
//! pierce point, `plunge-centre` its hollow), `tab` (the stretch of the tool-centre path left
//! uncut, `data-from` and `data-to` its ends in mm along the contour from its start),
//! `tab-marker` (a diamond at each tab's middle), `work-zero`, and the labels: `ellipse-label`
//! (name, semi-axes a and b, angle), `hole-label` (`Ø9 mm` for a circle), `cut-order` (the cut's number
//! in the program, beside its entry point, `data-order`), `leader` (from a label set away from
//! its feature back to it); then `scale-bar`, `legend` and `title`.
//!
//! Markers and arrows take their size from their feature's (see [`MIN_ARROW`]). Labels go in
//! free space, found on a coarse occupancy grid of everything drawn (`occupancy.rs`,
//! `labels.rs`). The legend lists only what is drawn, each sample with the look of what it
//! stands for (`legend.rs`, `look.rs`).

mod frame;
mod labels;
mod legend;
mod look;
mod occupancy;
mod shapes;

pub use look::Process;

use crate::chain::{InnerShape, Part};
use crate::fit::FittedCut;
use crate::geom::{Contour, Element, Move};
use crate::geom::{Ellipse, Point, Vec2};
use crate::plan::CutSide;
use frame::{Bounds, Frame, num, scale_bar_length};
use labels::{Candidate, LINE_EM, MIN_FONT, Rings, TextBlock};
use legend::Present;
use look::{Look, Looks, RAPID_HEAD, Words, palette};
use occupancy::Occupancy;
use shapes::{arrow_d, arrow_spots, contour_d, ellipse_bounds, ellipse_d, moves_d, polyline_d};
use svg::Document;
use svg::node::element::{
    Circle, Definitions, Group, Line, Marker, Path, Rectangle, TSpan, Text, Title,
};

/// What the preview shows.
#[derive(Debug, Clone, Copy)]
pub struct PreviewInput<'a> {
    pub title: &'a str,
    pub part: &'a Part,
    /// Solved openings: the bay's name and its ellipse.
    pub ellipses: &'a [(String, Ellipse)],
    /// The cuts in the order the program makes them.
    pub cuts: &'a [FittedCut],
    /// Tool diameter (mm), drawn as a translucent band along each tool path; 0 for none.
    pub tool_diameter: f64,
    /// Where the program's X0 Y0 is on the part, in words (`the lower-left corner of the
    /// outline's box`); the picture is in program coordinates, so X0 Y0 is its origin, marked
    /// by two axes.
    pub work_zero: &'a str,
}

/// How the preview is worded: [`preview_svg`] uses the default, a mill's or router's words.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct PreviewOptions {
    /// `Process::CutThrough` for a laser, plasma table or waterjet: kerf path, pierce point and
    /// kerf width instead of tool centre path, plunge point and tool diameter.
    pub process: Process,
}

/// The shortest direction arrow (mm): readable on a 1:1 print however small the feature.
pub const MIN_ARROW: f64 = 1.5;

/// The smallest plunge or pierce marker's radius (mm).
pub const MIN_MARKER: f64 = 0.6;

/// The preview as an SVG document, worded for a mill or router.
///
/// Pure: the same input gives the same text. Non-finite points are left out rather than written.
pub fn preview_svg(input: &PreviewInput) -> String {
    preview_svg_with(input, &PreviewOptions::default())
}

/// The preview as an SVG document, worded for `options.process`.
pub fn preview_svg_with(input: &PreviewInput, options: &PreviewOptions) -> String {
    let content = content_bounds(input).unwrap_or(Bounds {
        min: Point::new(0.0, 0.0),
        max: Point::new(100.0, 100.0),
    });
    let frame = Frame::around(content, 0);
    let u = frame.unit();
    let mut page = Page {
        frame,
        looks: Looks::new(u, input.tool_diameter),
        words: options.process.words(),
        grid: Occupancy::new(frame.drawing_area(), 0.5 * MIN_FONT),
        present: Present::default(),
    };

    let part = part_group(input.part, &mut page);
    let solved = ellipse_group(input.ellipses, &mut page);
    let (cuts, starts) = cut_group(input, &mut page);
    let origin = origin_in_view(&page.frame).then(|| origin_group(&mut page));
    let labels = label_group(input, &starts, &mut page);

    let rows = legend::rows(&page.looks, &page.words, &page.present, u, frame.font);
    let frame = Frame::around(content, rows);
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
        .add(Title::new(format!("conicut preview: {}", input.title)));
    if page.present.rapid {
        doc = doc.add(rapid_head());
    }
    doc = doc
        .add(
            Rectangle::new()
                .set("class", "background")
                .set("x", num(frame.view_x))
                .set("y", num(frame.view_y))
                .set("width", num(frame.view_w))
                .set("height", num(frame.view_h))
                .set("fill", palette::BACKGROUND),
        )
        .add(part)
        .add(solved)
        .add(cuts);
    if let Some(origin) = origin {
        doc = doc.add(origin);
    }
    doc = doc
        .add(labels)
        .add(title_group(input, &frame, &page.words))
        .add(scale_bar(&frame))
        .add(legend::legend(
            &frame,
            &page.looks,
            &page.words,
            &page.present,
        ));
    doc.to_string()
}

/// What one page is drawn with: its frame and looks, the occupancy grid of what is drawn so far,
/// and what the picture holds.
struct Page {
    frame: Frame,
    looks: Looks,
    words: Words,
    grid: Occupancy,
    present: Present,
}

/// Sizes taken from a feature's size: arrows, markers and the cut number.
#[derive(Debug, Clone, Copy)]
struct Sizes {
    arrow: f64,
    plunge: f64,
    tab: f64,
    order_font: f64,
}

/// `v` held between `lo` and `hi` (`hi` when it is not finite; `lo` wins over a smaller `hi`).
fn held(v: f64, lo: f64, hi: f64) -> f64 {
    let hi = hi.max(lo);
    if v.is_finite() { v.clamp(lo, hi) } else { hi }
}

impl Sizes {
    /// Sizes for a feature whose tool path's box has `path` (mm) as its smaller side, cut with a
    /// tool of `diameter` on `side`: arrows (drawn on the path) three tenths of the path's
    /// size, the entry marker (0.12) and the cut number (0.2) from the feature's (the path's,
    /// plus the tool inside a hole); never below what stays readable ([`MIN_ARROW`], [`MIN_MARKER`],
    /// [`MIN_FONT`]) nor above the page's sizes.
    fn of(path: Option<f64>, diameter: f64, side: CutSide, frame: &Frame) -> Sizes {
        let u = frame.unit();
        let s = path.unwrap_or(f64::INFINITY);
        let feature = match side {
            CutSide::Inside => s + diameter,
            CutSide::Outside => s,
        };
        Sizes {
            arrow: held(0.3 * s, MIN_ARROW, 9.0 * u),
            plunge: held(0.12 * feature, MIN_MARKER, 4.0 * u),
            tab: held(0.12 * feature, 0.75, 5.0 * u),
            order_font: held(0.2 * feature, MIN_FONT, 0.6 * frame.font),
        }
    }
}

/// The smaller side of the box of the contour of `cut` (its larger side for a straight run),
/// `None` for a run without length.
fn feature_size(cut: &FittedCut) -> Option<f64> {
    let pts = crate::geom::moves::sample(cut.start, &cut.moves, 8);
    let b = Bounds::of(pts)?;
    let (lo, hi) = (b.width().min(b.height()), b.width().max(b.height()));
    [lo, hi].into_iter().find(|s| s.is_finite() && *s > 0.0)
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

/// Marks a contour in the grid, each arc by chords within a quarter cell.
fn mark_contour(grid: &mut Occupancy, c: &Contour, half_width: f64) {
    for element in c.elements() {
        match element {
            Element::Line(s) => grid.mark_segment(s.start, s.end, half_width),
            Element::Arc(a) => {
                let (n, sag) = grid.chords(a.radius, a.sweep);
                let mut at = a.point_at(0.0);
                for k in 1..=n {
                    let p = a.point_at(k as f64 / n as f64);
                    grid.mark_segment(at, p, half_width + sag);
                    at = p;
                }
            }
        }
    }
}

/// Marks an ellipse's curve in the grid by chords in equal steps h of the parameter, few enough
/// to sag (at most a h²/8, the curve's acceleration being at most a) a quarter cell.
fn mark_ellipse(grid: &mut Occupancy, e: &Ellipse, half_width: f64) {
    let tol = 0.25 * grid.cell();
    let h = (8.0 * tol / e.a()).sqrt();
    let n = ((std::f64::consts::TAU / h).ceil() as usize).clamp(8, 512);
    let step = std::f64::consts::TAU / n as f64;
    let sag = e.a() * step * step / 8.0;
    let pts: Vec<Point> = (0..=n).map(|k| e.point(k as f64 * step)).collect();
    grid.mark_polyline(&pts, half_width + sag);
}

fn part_group(part: &Part, page: &mut Page) -> Group {
    let looks = &page.looks;
    let mut g = Group::new().set("class", "part");
    for bay in &part.bays {
        g = g.add(
            looks.bay.apply(
                Path::new()
                    .set("class", "bay")
                    .set("data-name", bay.name())
                    .set("d", polyline_d(bay.corners(), true)),
            ),
        );
        let mut ring = bay.corners().to_vec();
        ring.extend(bay.corners().first().copied());
        page.grid.mark_polyline(&ring, looks.bay.half_width());
        page.present.bay = true;
    }
    if let Some(outline) = &part.outline {
        g = g.add(
            looks.outline.apply(
                Path::new()
                    .set("class", "outline")
                    .set("d", contour_d(outline)),
            ),
        );
        mark_contour(&mut page.grid, outline, looks.outline.half_width());
        page.present.outline = true;
    }
    for hole in &part.holes {
        let d = match &hole.shape {
            InnerShape::Contour(c) => {
                mark_contour(&mut page.grid, c, looks.outline.half_width());
                contour_d(c)
            }
            InnerShape::Ellipse(e) => {
                mark_ellipse(&mut page.grid, e, looks.outline.half_width());
                ellipse_d(e)
            }
        };
        g = g.add(
            looks.outline.apply(
                Path::new()
                    .set("class", "hole")
                    .set("data-name", hole.name.as_str())
                    .set("d", d),
            ),
        );
        page.present.hole = true;
    }
    g
}

/// The solved ellipses' curves (their labels are placed with the others, last).
fn ellipse_group(ellipses: &[(String, Ellipse)], page: &mut Page) -> Group {
    let look = &page.looks.ellipse;
    let mut g = Group::new().set("class", "solved");
    for (name, e) in ellipses {
        g = g.add(
            look.apply(
                Path::new()
                    .set("class", "ellipse")
                    .set("data-name", name.as_str())
                    .set("d", ellipse_d(e)),
            ),
        );
        mark_ellipse(&mut page.grid, e, look.half_width());
        page.present.ellipse = true;
    }
    g
}

/// Where a cut starts, for its order number: the cut's name, its plunge point and the marker's
/// radius there, and the number's text size.
struct Start<'a> {
    name: &'a str,
    at: Point,
    marker: f64,
    font: f64,
}

fn cut_group<'a>(input: &'a PreviewInput, page: &mut Page) -> (Group, Vec<Start<'a>>) {
    let mut bands = Group::new().set("class", "tool-bands");
    let mut paths = Group::new().set("class", "tool-paths");
    let show_band = page.looks.band.stroke_width.unwrap_or(0.0) > 0.0
        && page.looks.band.stroke_width >= page.looks.path.stroke_width;
    let mut previous_end: Option<Point> = None;
    let mut starts = Vec::with_capacity(input.cuts.len());
    let diameter = if input.tool_diameter.is_finite() {
        input.tool_diameter.max(0.0)
    } else {
        0.0
    };
    for cut in input.cuts {
        let sizes = Sizes::of(feature_size(cut), diameter, cut.side, &page.frame);
        if show_band {
            bands = bands.add(tool_band(cut, page));
        }
        if let Some(from) = previous_end
            && from.is_finite()
            && cut.plunge.is_finite()
        {
            paths = paths.add(rapid(from, cut.plunge, page));
        }
        paths = run_paths(paths, cut, page);
        paths = tab_marks(paths, cut, &sizes, page);
        paths = direction_arrows(paths, cut, &sizes, page);
        paths = plunge_marks(paths, cut, &sizes, page);
        starts.push(Start {
            name: cut.name.as_str(),
            at: cut.plunge,
            marker: sizes.plunge,
            font: sizes.order_font,
        });
        previous_end = Some(cut.end());
    }
    (
        Group::new().set("class", "cuts").add(bands).add(paths),
        starts,
    )
}

/// The band the tool sweeps along the contour of `cut`, the tool's diameter wide.
fn tool_band(cut: &FittedCut, page: &mut Page) -> Path {
    let look = &page.looks.band;
    page.grid
        .mark_moves(cut.start, &cut.moves, look.half_width());
    page.present.band |= !cut.moves.is_empty();
    look.apply(
        Path::new()
            .set("class", "tool-band")
            .set("data-name", cut.name.as_str())
            .set("d", moves_d(None, cut.start, &cut.moves)),
    )
}

/// The rapid from the end of one cut to the plunge point of the next: dashed, in its own colour,
/// an arrowhead at its middle pointing the way it goes.
fn rapid(from: Point, to: Point, page: &mut Page) -> Path {
    let u = page.frame.unit();
    let mid = from.midpoint(to);
    page.grid
        .mark_segment(from, to, page.looks.rapid.half_width());
    // The arrowhead: 5 stroke widths long, 4 wide (see `rapid_head`).
    page.grid.mark_box(
        mid - Vec2::new(2.5 * u, 2.5 * u),
        mid + Vec2::new(2.5 * u, 2.5 * u),
    );
    page.present.rapid = true;
    page.looks.rapid.apply(
        Path::new()
            .set("class", "rapid")
            .set("d", polyline_d(&[from, mid, to], false)),
    )
}

/// The rapid's arrowhead, drawn at the middle vertex of each rapid, in stroke widths.
fn rapid_head() -> Definitions {
    Definitions::new().add(
        Marker::new()
            .set("id", RAPID_HEAD)
            .set("viewBox", "0 0 10 8")
            .set("refX", "5")
            .set("refY", "4")
            .set("markerWidth", "5")
            .set("markerHeight", "4")
            .set("markerUnits", "strokeWidth")
            .set("orient", "auto")
            .add(
                Path::new()
                    .set("d", "M 0 0 L 10 4 L 0 8 Z")
                    .set("fill", palette::RAPID),
            ),
    )
}

/// Adds the runs of `cut` to `g`: the clearing and the lead-in, the contour, then the overcut and
/// the lead-out.
fn run_paths(mut g: Group, cut: &FittedCut, page: &mut Page) -> Group {
    for (class, from, moves) in runs(cut) {
        if moves.is_empty() {
            continue;
        }
        let look: &Look = match class {
            "tool-path" => &page.looks.path,
            "clearing" => &page.looks.clearing,
            _ => &page.looks.lead,
        };
        // The contour's cells are marked already when its band, at least as wide, was drawn.
        let banded = class == "tool-path"
            && page.present.band
            && page.looks.band.half_width() >= look.half_width();
        if !banded {
            page.grid.mark_moves(from, moves, look.half_width());
        }
        g = g.add(
            look.apply(
                Path::new()
                    .set("class", class)
                    .set("data-name", cut.name.as_str())
                    .set("d", moves_d(None, from, moves)),
            ),
        );
        let p = &mut page.present;
        match class {
            "tool-path" => p.path = true,
            "clearing" => p.clearing = true,
            "lead-in" => p.lead_in = true,
            "overcut" => p.overcut = true,
            _ => p.lead_out = true,
        }
    }
    g
}

/// Adds arrows showing the direction of travel of `cut` to `g`, at 20 % and 70 % of its path,
/// sized from the feature.
fn direction_arrows(mut g: Group, cut: &FittedCut, sizes: &Sizes, page: &mut Page) -> Group {
    let path = drawn_path(cut);
    let length = sizes.arrow;
    for (at, dir) in arrow_spots(&path, &[0.2, 0.7]) {
        let r = Vec2::new(0.5 * length, 0.5 * length);
        page.grid.mark_box(at - r, at + r);
        page.present.direction = true;
        g = g.add(
            page.looks.direction.apply(
                Path::new()
                    .set("class", "direction")
                    .set("data-name", cut.name.as_str())
                    .set("d", arrow_d(at, dir, length)),
            ),
        );
    }
    g
}

/// Adds the plunge (or pierce) point of `cut` to `g`: a disc and its hollow centre, sized from
/// the feature.
fn plunge_marks(g: Group, cut: &FittedCut, sizes: &Sizes, page: &mut Page) -> Group {
    if !cut.plunge.is_finite() {
        return g;
    }
    let r = sizes.plunge;
    page.grid
        .mark_box(cut.plunge - Vec2::new(r, r), cut.plunge + Vec2::new(r, r));
    page.present.plunge = true;
    let (x, y) = page.frame.svg_xy(cut.plunge);
    let disc = |look: &Look, r: f64| {
        look.apply(
            Circle::new()
                .set("cx", num(x))
                .set("cy", num(y))
                .set("r", num(r)),
        )
    };
    g.add(
        disc(&page.looks.plunge, r)
            .set("class", "plunge")
            .set("data-name", cut.name.as_str()),
    )
    .add(disc(&page.looks.plunge_centre, 0.4 * r).set("class", "plunge-centre"))
}

/// Adds each tab of `cut` to `g`: the uncut stretch of the tool-centre path drawn over it, wide
/// and in the tab colour, and a diamond at its middle.
fn tab_marks(mut g: Group, cut: &FittedCut, sizes: &Sizes, page: &mut Page) -> Group {
    for &(from, to) in &cut.tabs {
        if let Some((at, moves)) = stretch(cut.start, &cut.moves, from, to) {
            page.grid
                .mark_moves(at, &moves, page.looks.tab.half_width());
            page.present.tab = true;
            g = g.add(
                page.looks.tab.apply(
                    Path::new()
                        .set("class", "tab")
                        .set("data-name", cut.name.as_str())
                        .set("data-from", num(from))
                        .set("data-to", num(to))
                        .set("d", moves_d(None, at, &moves)),
                ),
            );
        }
        if let Some((mid, dir)) = point_along(cut.start, &cut.moves, 0.5 * (from + to)) {
            let half = sizes.tab;
            page.grid
                .mark_box(mid - Vec2::new(half, half), mid + Vec2::new(half, half));
            page.present.tab_marker = true;
            g = g.add(
                page.looks.tab_marker.apply(
                    Path::new()
                        .set("class", "tab-marker")
                        .set("data-name", cut.name.as_str())
                        .set("d", diamond_d(mid, dir, half))
                        .add(Title::new(format!(
                            "tab: {} mm of the {} left uncut",
                            fixed(to - from, 2),
                            page.words.path
                        ))),
                ),
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

/// The labels: each cut's number beside its entry point, each ellipse's name and size, each
/// drawn hole's size; each in free space (see `labels.rs`), with a leader when moved away.
fn label_group(input: &PreviewInput, starts: &[Start], page: &mut Page) -> Group {
    let f = page.frame.font;
    let leader_hw = page.looks.leader.half_width();
    let mut leaders: Vec<Path> = Vec::new();
    let mut texts: Vec<Text> = Vec::new();
    let mut add = |page: &mut Page,
                   class: &str,
                   name: &str,
                   order: Option<usize>,
                   block: TextBlock,
                   candidates: Vec<Candidate>,
                   look: &Look,
                   only_free: bool|
     -> bool {
        let half = block.half();
        let Some(placed) = labels::place(&mut page.grid, half, &candidates, leader_hw, only_free)
        else {
            return false;
        };
        if let Some((from, to)) = placed.leader {
            leaders.push(
                page.looks.leader.apply(
                    Path::new()
                        .set("class", "leader")
                        .set("data-name", name)
                        .set("d", polyline_d(&[from, to], false)),
                ),
            );
        }
        let mut text = label_text(class, name, &block, placed.centre, look);
        if let Some(k) = order {
            text = text.set("data-order", k.to_string());
        }
        texts.push(text);
        true
    };
    // The cut numbers first: small, and wanted right beside their marks.
    for (k, s) in starts.iter().enumerate() {
        if !s.at.is_finite() {
            continue;
        }
        let block = TextBlock {
            lines: vec![(k + 1).to_string()],
            font: s.font,
        };
        let (at, r) = (s.at, s.marker);
        let edge = move |d: Vec2| at + d * r;
        let half = block.half();
        let rings = Rings {
            gap: 0.15 * s.font,
            step: half.y,
            count: 6,
            leader_from: 1,
        };
        let candidates = labels::around(at, Vec2::new(r, r), half, rings, &edge);
        let look = page.looks.cut_order.clone();
        page.present.cut_order |= add(
            page,
            "cut-order",
            s.name,
            Some(k + 1),
            block,
            candidates,
            &look,
            false,
        );
    }
    let look = page.looks.ellipse_label.clone();
    for (name, e) in input.ellipses {
        // Inside the ellipse, small enough to fit across it, where that is free; else beside
        // it, larger, with a leader.
        let block = ellipse_block(name, e, f, false);
        if add(
            page,
            "ellipse-label",
            name,
            None,
            block,
            labels::inside(e),
            &look,
            true,
        ) {
            continue;
        }
        let block = ellipse_block(name, e, f, true);
        let [lo, hi] = ellipse_bounds(e);
        let edge = |d: Vec2| labels::ellipse_edge(e, d);
        let half = block.half();
        let rings = Rings {
            gap: 0.3 * block.font,
            step: half.y,
            count: 6,
            leader_from: 0,
        };
        let candidates = labels::around(e.centre(), (hi - lo) * 0.5, half, rings, &edge);
        add(
            page,
            "ellipse-label",
            name,
            None,
            block,
            candidates,
            &look,
            false,
        );
    }
    for hole in &input.part.holes {
        let InnerShape::Contour(c) = &hole.shape else {
            // Drawn ellipses come with the solved ones and are labelled as those are.
            continue;
        };
        let Some((block, centre, extent, radius)) = hole_block(c, f) else {
            continue;
        };
        let edge = move |d: Vec2| match radius {
            Some(r) => centre + d * r,
            None => {
                let k = (extent.x / d.x.abs()).min(extent.y / d.y.abs());
                centre + d * if k.is_finite() { k } else { 0.0 }
            }
        };
        let half = block.half();
        let rings = Rings {
            gap: 0.3 * block.font,
            step: 2.0 * half.y,
            count: 3,
            leader_from: 1,
        };
        let candidates = labels::around(centre, extent, half, rings, &edge);
        let look = page.looks.hole_label.clone();
        add(
            page,
            "hole-label",
            &hole.name,
            None,
            block,
            candidates,
            &look,
            false,
        );
    }
    let leaders = leaders
        .into_iter()
        .fold(Group::new().set("class", "leaders"), Group::add);
    let texts = texts
        .into_iter()
        .fold(Group::new().set("class", "labels"), Group::add);
    Group::new()
        .set("class", "annotations")
        .add(leaders)
        .add(texts)
}

/// An ellipse's label: its name, semi-axes and angle. Inside it, small enough to fit across it
/// (the half-width of the ellipse along x is ab / sqrt(b² cos²θ + a² sin²θ)); `outside` it, as
/// large as that or a twentieth of the major axis, up to 0.55 of the page's text. Never below
/// [`MIN_FONT`] nor above the page's text.
fn ellipse_block(name: &str, e: &Ellipse, page_font: f64, outside: bool) -> TextBlock {
    let lines = vec![
        name.to_string(),
        // Semi-axes a and b, as the report and its JSON give them: one convention everywhere.
        format!("a = {}, b = {} mm", fixed(e.a(), 2), fixed(e.b(), 2)),
        format!("at {}°", fixed(e.angle().to_degrees(), 1)),
    ];
    let (s, c) = e.angle().sin_cos();
    let half_width = e.a() * e.b() / ((e.b() * c).powi(2) + (e.a() * s).powi(2)).sqrt();
    let widest = lines.iter().map(|l| l.chars().count()).max().unwrap_or(1) as f64;
    let fit = 0.85 * 2.0 * half_width / (labels::CHAR_EM * widest);
    let font = if outside {
        held(fit.max(0.05 * 2.0 * e.a()), MIN_FONT, 0.55 * page_font)
    } else {
        held(fit, MIN_FONT, page_font)
    };
    TextBlock { lines, font }
}

/// A drawn hole's label: `Ø9 mm` for a circle, else the box's sides; with the hole's centre, its
/// half-size and, for a circle, its radius.
fn hole_block(c: &Contour, page_font: f64) -> Option<(TextBlock, Point, Vec2, Option<f64>)> {
    let (lo, hi) = c.bounds()?;
    let (centre, extent) = (lo.midpoint(hi), (hi - lo) * 0.5);
    if !centre.is_finite() || !extent.x.is_finite() || !extent.y.is_finite() {
        return None;
    }
    let circle = circle_of(c);
    let (text, size) = match circle {
        Some((_, r)) => (format!("Ø{} mm", trimmed(2.0 * r)), 2.0 * r),
        None => (
            format!(
                "{} × {} mm box",
                trimmed(2.0 * extent.x),
                trimmed(2.0 * extent.y)
            ),
            2.0 * extent.x.min(extent.y),
        ),
    };
    let block = TextBlock {
        lines: vec![text],
        font: held(0.35 * size, MIN_FONT, 0.8 * page_font),
    };
    let centre = circle.map_or(centre, |(c, _)| c);
    Some((block, centre, extent, circle.map(|(_, r)| r)))
}

/// The centre and radius of a contour made of arcs of one circle going once round it.
fn circle_of(c: &Contour) -> Option<(Point, f64)> {
    let first = match c.elements().first()? {
        Element::Arc(a) => *a,
        Element::Line(_) => return None,
    };
    let (centre, r) = (first.centre, first.radius);
    let close = 1e-6 * r.max(1.0);
    let mut sweep = 0.0;
    for element in c.elements() {
        let Element::Arc(a) = element else {
            return None;
        };
        if a.centre.distance(centre) > close || (a.radius - r).abs() > close {
            return None;
        }
        sweep += a.sweep;
    }
    ((sweep.abs() - std::f64::consts::TAU).abs() < 1e-6 && r > 0.0 && r.is_finite())
        .then_some((centre, r))
}

/// A label's text element: centred on `centre` (drawing mm), its lines stacked.
fn label_text(class: &str, name: &str, block: &TextBlock, centre: Point, look: &Look) -> Text {
    let step = LINE_EM * block.font;
    let x = centre.x;
    let y = -centre.y - 0.5 * (block.lines.len() as f64 - 1.0) * step;
    let base = |t: Text| {
        look.apply(
            t.set("class", class)
                .set("data-name", name)
                .set("x", num(x))
                .set("y", num(y))
                .set("font-size", num(block.font))
                .set("text-anchor", "middle")
                .set("dominant-baseline", "middle"),
        )
    };
    match block.lines.as_slice() {
        [one] => base(Text::new(one.as_str())),
        lines => {
            let mut text = base(Text::new(""));
            for (i, line) in lines.iter().enumerate() {
                text = text.add(
                    TSpan::new(line.as_str())
                        .set("x", num(x))
                        .set("dy", if i == 0 { "0".to_string() } else { num(step) }),
                );
            }
            text
        }
    }
}

fn title_group(input: &PreviewInput, frame: &Frame, words: &Words) -> Group {
    let x = frame.view_x + 1.0 * frame.font;
    let y = frame.view_y + 1.6 * frame.font;
    let mut counts = format!(
        "{} cut{}, {} solved ellipse{}",
        input.cuts.len(),
        plural(input.cuts.len()),
        input.ellipses.len(),
        plural(input.ellipses.len())
    );
    if input.tool_diameter.is_finite() && input.tool_diameter > 0.0 {
        counts.push_str(&format!(
            ", {} {} mm",
            words.size,
            fixed(input.tool_diameter, 2)
        ));
    }
    let mut place = format!("dimensions in mm, drawn 1:1; X0 Y0 = {}", input.work_zero);
    if !origin_in_view(frame) {
        place.push_str(" (outside this view)");
    }
    let small = |text: String, dy: f64| {
        Text::new(text)
            .set("x", num(x))
            .set("y", num(y + dy * frame.font))
            .set("font-size", num(0.8 * frame.font))
    };
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
        .add(small(counts, 1.3))
        .add(small(place, 2.4))
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

/// An SVG line from (x1, y1) to (x2, y2), numbers as the frame writes them.
pub(super) fn line(x1: f64, y1: f64, x2: f64, y2: f64) -> Line {
    Line::new()
        .set("x1", num(x1))
        .set("y1", num(y1))
        .set("x2", num(x2))
        .set("y2", num(y2))
}

/// Whether the program's origin lies inside the drawn content (see [`content_bounds`]).
fn origin_in_view(frame: &Frame) -> bool {
    let c = &frame.content;
    c.min.x <= 0.0 && 0.0 <= c.max.x && c.min.y <= 0.0 && 0.0 <= c.max.y
}

/// The work zero: a ring at X0 Y0 and arrows along +X and +Y, three text heights long, each
/// named by its letter.
fn origin_group(page: &mut Page) -> Group {
    let u = page.frame.unit();
    let f = page.frame.font;
    let length = 3.0 * f;
    let look = &page.looks.work_zero;
    let mut g = look.apply(Group::new().set("class", "work-zero"));
    g = g.add(axes_mark(0.0, 0.0, length, u));
    // The axes, their heads and letters, in drawing mm.
    let hw = look.half_width() + 0.125 * length;
    page.grid
        .mark_segment(Point::ORIGIN, Point::new(length, 0.0), hw);
    page.grid
        .mark_segment(Point::ORIGIN, Point::new(0.0, length), hw);
    for (text, x, y) in [("X", length + 0.4 * f, 0.0), ("Y", 0.0, -length - 0.5 * f)] {
        let c = Point::new(x, -y);
        let half = Vec2::new(0.4 * f, 0.5 * f);
        page.grid.mark_box(c - half, c + half);
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
    page.present.work_zero = true;
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

/// `v` with two decimals, trailing zeros dropped: `9`, `8.5`, `12.25`.
fn trimmed(v: f64) -> String {
    let s = fixed(v, 2);
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

fn plural(n: usize) -> &'static str {
    if n == 1 { "" } else { "s" }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geom::ArcSegment;

    #[test]
    fn sizes_follow_the_feature_within_their_limits() {
        let frame = Frame::around(
            Bounds {
                min: Point::new(0.0, 0.0),
                max: Point::new(1000.0, 600.0),
            },
            4,
        );
        // A 3 mm tool path (a 9 mm hole, 6 mm tool) on a big page: the floor, not the page's.
        let small = Sizes::of(Some(3.0), 6.0, CutSide::Inside, &frame);
        assert_eq!(small.arrow, MIN_ARROW);
        assert!((small.plunge - 0.12 * 9.0).abs() < 1e-12);
        assert!((small.order_font - 0.2 * 9.0).abs() < 1e-12);
        let tiny = Sizes::of(Some(0.5), 0.2, CutSide::Inside, &frame);
        assert_eq!(tiny.plunge, MIN_MARKER);
        assert_eq!(tiny.order_font, MIN_FONT);
        let big = Sizes::of(Some(400.0), 6.0, CutSide::Outside, &frame);
        assert!((big.arrow - 9.0 * frame.unit()).abs() < 1e-12);
        let none = Sizes::of(None, 6.0, CutSide::Inside, &frame);
        assert!(none.arrow.is_finite() && none.plunge.is_finite());
        // A page whose own sizes are below the floors: the floors win, no panic.
        assert_eq!(held(0.1, 1.5, 0.2), 1.5);
        assert_eq!(held(f64::NAN, 1.5, 3.0), 3.0);
    }

    #[test]
    fn circles_are_told_from_other_contours() {
        let c = Contour::new(
            vec![Element::Arc(ArcSegment::circle(Point::new(3.0, 4.0), 4.5))],
            "0",
            vec![],
        )
        .unwrap();
        let (centre, r) = circle_of(&c).unwrap();
        assert!(centre.distance(Point::new(3.0, 4.0)) < 1e-12 && (r - 4.5).abs() < 1e-12);
        let (block, ..) = hole_block(&c, 5.0).unwrap();
        assert_eq!(block.lines, vec!["Ø9 mm".to_string()]);
        assert_eq!(trimmed(8.5), "8.5");
        assert_eq!(trimmed(12.25), "12.25");
        assert_eq!(trimmed(10.0), "10");
    }
}
