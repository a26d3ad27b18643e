//! Tabs (micro-joints): short stretches of the outline left uncut so that the part stays in the
//! sheet or on the table.
//!
//! # What a tab is
//!
//! A tab is a stretch of the tool-centre path over which the tool does not cut: on a mill or
//! router it rises to the tab height above the floor, on a laser, plasma table or waterjet the
//! process is switched off. What stays is a bridge between the part and the scrap.
//!
//! # Length along the path: width + tool diameter
//!
//! [`Tab::length`] is measured along the tool-centre path and is the requested bridge `width`
//! plus the tool (or kerf) diameter `d`. The tool, stopped at either end of the span, still
//! removes a half-disc of radius `d/2` beyond the span's end, so along the middle of the kerf
//! the material left between the two end positions is `length − d = width` long; this is the
//! bridge's narrowest section, which is what holds the part. At the part's edge (where the disc
//! only touches) the uncut edge is the whole `length` long on a straight stretch.
//!
//! On an arc of tool-centre radius `R` the span is measured along the arc. Along the kerf's
//! middle (the tool-centre circle) the disc at each end reaches `2R·asin(d/4R)` past the span's
//! end, so the narrowest section is `length − 4R·asin(d/4R) ≈ width − d³/(96R²)`: with `R ≥ 5 d`
//! (below) that is within `d/2400` of `width`. The part's edge under the bridge has
//! radius `R ∓ d/2` and so is `length · (R ∓ d/2)/R` long (shorter on a convex outline corner,
//! longer on a concave one): within 10 % of `length` for `R ≥ 5 d`.
//!
//! # Where tabs go
//!
//! Only on a path that is a contour of lines and arcs (the outline's tool-centre path); an
//! ellipse path gets none, with a warning.
//!
//! 1. **How many.** `count`, or the path length divided by `spacing`, rounded, at least one.
//! 2. **Spread evenly by length.** The aimed-for middles are the middles of `n` equal shares of
//!    the path from its start: `(k + ½)·P/n` for `k = 0 … n−1`, `P` the path length.
//! 3. **Gentle places only.** A tab lies wholly inside one element of the path that is a line,
//!    or an arc whose tool-centre radius is at least [`GENTLE_RADIUS_DIAMETERS`] tool diameters
//!    and at least `length / GENTLE_TURN` (so that the tab turns through at most
//!    [`GENTLE_TURN`] rad, 19°). Its span keeps [`END_MARGIN_DIAMETERS`] tool diameters from the
//!    element's ends (corners, the joins the offset adds round sharp corners, and tight arcs are
//!    never used).
//! 4. **Clear of the start.** The tool enters near the path's start and cuts the first stretch
//!    again (the overcut) at full depth, which would cut through a tab there. A tab's span stays
//!    after the overcut and the lead-out's reach, and before the lead-in's reach, each with
//!    [`START_MARGIN_DIAMETERS`] tool diameters to spare. The leads are added after the tabs
//!    (`leads::add_leads`), so their reach is taken from `opts.leads`: a line lead reaches
//!    `length`, an arc lead `radius`, a line-and-arc lead `length + radius` (a bound on how far
//!    along the path the lead's footprint can reach), a straight entry nothing.
//! 5. **Apart.** The gap between two tabs' spans is at least one tab length (middles at least
//!    two lengths apart, measured along the closed path).
//! 6. **Nearest.** Each aimed-for middle, in order along the path, is moved to the nearest point
//!    that satisfies 3–5 given the tabs already placed. When no such point is left, the tab is
//!    dropped and a warning names the feature and how many were placed of how many asked.
//!
//! Tolerances: none are spent here. Positions are exact lengths along the exact tool-centre
//! path (f64); a tab's middle is stored as its share of the path's length, which the fit maps
//! onto the fitted moves (lines and contour arcs are fitted exactly, so the spans land where
//! they were placed; band polygons of lines-only output differ in length by far less than the
//! end margin).

use super::{LeadKind, LeadOptions, PlanError, PlanOptions, PlannedCut, Tab, TabOptions};
use crate::geom::{Contour, Element, ExactPath};

/// An arc is gentle enough for a tab when its tool-centre radius is at least this many tool
/// diameters (our choice; common practice only says "straight or gently curved stretches",
/// docs/sources.md P4.3).
pub const GENTLE_RADIUS_DIAMETERS: f64 = 5.0;

/// The largest turn of the path across one tab (radians): an arc is gentle only when its
/// tool-centre radius is at least the tab's length divided by this (our choice).
pub const GENTLE_TURN: f64 = 1.0 / 3.0;

/// A tab's span keeps this many tool diameters from the ends of the element it lies on.
pub const END_MARGIN_DIAMETERS: f64 = 1.0;

/// A tab's span keeps this many tool diameters beyond the reach of the lead-in, the overcut and
/// the lead-out.
pub const START_MARGIN_DIAMETERS: f64 = 2.0;

/// The length along the tool-centre path (mm) that leaves a bridge `width` wide with a tool of
/// diameter `d`: `width + d` (see the module docs).
pub fn tab_length(width: f64, d: f64) -> f64 {
    width + d
}

/// How far along the path a lead of this shape can reach from the point where it meets the
/// path (mm): the straight part's length plus the arc's radius, whichever the shape has.
fn lead_reach(leads: &LeadOptions) -> f64 {
    let reach = match leads.kind {
        LeadKind::Straight => 0.0,
        LeadKind::Line => leads.length,
        LeadKind::Arc => leads.radius,
        LeadKind::LineArc => leads.length + leads.radius,
    };
    if reach.is_finite() {
        reach.max(0.0)
    } else {
        0.0
    }
}

/// How many tabs `tabs` asks for on a path `length` mm long: the count, or the length divided
/// by the spacing, rounded, at least one. `None` when neither is usable.
pub fn requested_count(tabs: &TabOptions, length: f64) -> Option<usize> {
    match tabs.count {
        Some(n) if n >= 1 => Some(n),
        Some(_) => None,
        None if tabs.spacing > 0.0 && tabs.spacing.is_finite() => {
            // `as` saturates: an absurdly small spacing asks for very many, which step 6 caps.
            Some(((length / tabs.spacing).round() as usize).max(1))
        }
        None => None,
    }
}

/// Where the tabs go on `cut` (see the module docs for the rules). Pushes a warning naming the
/// feature when fewer tabs fit than were asked for, when the request is unusable (no count or
/// spacing, a width that is not a positive number) or when the path is not a contour.
pub fn place_tabs(
    cut: &PlannedCut,
    tabs: &TabOptions,
    opts: &PlanOptions,
    warnings: &mut Vec<String>,
) -> Result<Vec<Tab>, PlanError> {
    let name = &cut.name;
    let d = opts.tool_diameter;
    let ExactPath::Contour(contour) = &cut.path else {
        warnings.push(format!(
            "{name}: tabs are placed on outlines made of lines and arcs only; this cut gets none"
        ));
        return Ok(Vec::new());
    };
    if !(tabs.width > 0.0 && tabs.width.is_finite()) {
        warnings.push(format!(
            "{name}: no tabs: the tab width must be a positive number of mm (got {})",
            tabs.width
        ));
        return Ok(Vec::new());
    }
    let total: f64 = contour.elements().iter().map(Element::length).sum();
    let Some(wanted) = requested_count(tabs, total).filter(|_| total > 0.0 && total.is_finite())
    else {
        warnings.push(format!(
            "{name}: no tabs: give a tab count of at least 1 or a spacing above 0 mm"
        ));
        return Ok(Vec::new());
    };
    let length = tab_length(tabs.width, d);
    let gentle_radius = (GENTLE_RADIUS_DIAMETERS * d).max(length / GENTLE_TURN);

    let allowed = gentle_stretches(
        contour,
        gentle_radius,
        END_MARGIN_DIAMETERS * d + 0.5 * length,
    );
    let free = clear_of_start(
        &allowed,
        &opts.leads,
        START_MARGIN_DIAMETERS * d,
        length,
        total,
    );
    let mut placed = spread(free, wanted, total, length);
    if placed.len() < wanted {
        warnings.push(format!(
            "{name}: {} of {wanted} tab(s) placed: the rest found no line or gentle arc \
             (tool-centre radius at least {gentle_radius:.1} mm) long enough for a {length:.2} mm \
             tab ({:.2} mm bridge plus the {d} mm tool) clear of the corners, the start region \
             and the other tabs. Ask for fewer or narrower tabs, or a larger spacing",
            placed.len(),
            tabs.width
        ));
    }
    placed.sort_by(f64::total_cmp);
    Ok(placed
        .into_iter()
        .map(|mid| Tab {
            at: mid / total,
            length,
        })
        .collect())
}

/// Step 3: where a tab's middle may go, element by element: along lines and arcs of at least
/// `gentle_radius`, `end_margin` from each piece's ends (shares of the contour's length in mm).
fn gentle_stretches(contour: &Contour, gentle_radius: f64, end_margin: f64) -> Vec<(f64, f64)> {
    let mut allowed = Vec::new();
    let mut at = 0.0;
    for e in contour.elements() {
        let l = e.length();
        let gentle = match e {
            Element::Line(_) => true,
            Element::Arc(a) => a.radius >= gentle_radius,
        };
        if gentle {
            push_interval(&mut allowed, at + end_margin, at + l - end_margin);
        }
        at += l;
    }
    allowed
}

/// Step 4: the stretches of `allowed` clear of the start: past the overcut and lead-out, and
/// before the lead-in, each by `margin` plus half a tab of `length`, on a path `total` mm long.
fn clear_of_start(
    allowed: &[(f64, f64)],
    leads: &LeadOptions,
    margin: f64,
    length: f64,
    total: f64,
) -> Vec<(f64, f64)> {
    let overcut = if leads.overcut.is_finite() {
        leads.overcut.max(0.0)
    } else {
        0.0
    };
    let out_reach = if leads.lead_out {
        lead_reach(leads)
    } else {
        0.0
    };
    let after = overcut + out_reach + margin + 0.5 * length;
    let before = lead_reach(leads) + margin + 0.5 * length;
    intersect(allowed, after, total - before)
}

/// Steps 2, 5 and 6: up to `wanted` tab middles in `free`, each nearest its even share of the
/// path (`total` mm long) and two tab lengths from the others (round the start too).
fn spread(mut free: Vec<(f64, f64)>, wanted: usize, total: f64, length: f64) -> Vec<f64> {
    let separation = 2.0 * length;
    let mut placed: Vec<f64> = Vec::new();
    for k in 0..wanted {
        if free.is_empty() {
            break;
        }
        let aim = (k as f64 + 0.5) * total / wanted as f64;
        let Some(mid) = nearest(&free, aim) else {
            break;
        };
        placed.push(mid);
        for shift in [-total, 0.0, total] {
            free = subtract(&free, mid + shift - separation, mid + shift + separation);
        }
    }
    placed
}

/// Appends the closed interval `[a, b]` when it is not empty.
fn push_interval(out: &mut Vec<(f64, f64)>, a: f64, b: f64) {
    if a <= b {
        out.push((a, b));
    }
}

/// The parts of `set` inside `[lo, hi]`.
fn intersect(set: &[(f64, f64)], lo: f64, hi: f64) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    for &(a, b) in set {
        push_interval(&mut out, a.max(lo), b.min(hi));
    }
    out
}

/// `set` without the open interval `(lo, hi)`.
fn subtract(set: &[(f64, f64)], lo: f64, hi: f64) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    for &(a, b) in set {
        if b <= lo || a >= hi {
            out.push((a, b));
        } else {
            push_interval(&mut out, a, lo);
            push_interval(&mut out, hi, b);
        }
    }
    out
}

/// The point of `set` nearest to `aim` (the earlier one on a tie).
fn nearest(set: &[(f64, f64)], aim: f64) -> Option<f64> {
    set.iter()
        .map(|&(a, b)| aim.clamp(a, b))
        .min_by(|x, y| (x - aim).abs().total_cmp(&(y - aim).abs()))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geom::Contour;
    use crate::geom::Edge;
    use crate::geom::{ArcSegment, Point, Segment};
    use crate::plan::{CutSide, FeatureKind};
    use std::f64::consts::FRAC_PI_2;

    /// A clockwise tool-centre path round a `w` × `h` rectangle whose corners are quarter arcs
    /// of radius `r`, starting at the start of the bottom-left corner arc.
    fn rounded_rectangle(w: f64, h: f64, r: f64) -> Contour {
        let arc = |cx: f64, cy: f64, from: f64| {
            Element::Arc(ArcSegment {
                centre: Point::new(cx, cy),
                radius: r,
                start_angle: from,
                sweep: -FRAC_PI_2,
            })
        };
        let line = |a: (f64, f64), b: (f64, f64)| {
            Element::Line(Segment::new(Point::new(a.0, a.1), Point::new(b.0, b.1)))
        };
        Contour::new(
            vec![
                arc(r, r, -FRAC_PI_2),
                line((0.0, r), (0.0, h - r)),
                arc(r, h - r, std::f64::consts::PI),
                line((r, h), (w - r, h)),
                arc(w - r, h - r, FRAC_PI_2),
                line((w, h - r), (w, r)),
                arc(w - r, r, 0.0),
                line((w - r, 0.0), (r, 0.0)),
            ],
            "0",
            vec![],
        )
        .unwrap()
    }

    fn cut_on(c: Contour) -> PlannedCut {
        let start = c.start_point().unwrap_or(Point::ORIGIN);
        PlannedCut::new(
            "outline",
            FeatureKind::Outline,
            CutSide::Outside,
            ExactPath::Contour(c.clone()),
            start,
            Edge::Contour(c),
        )
    }

    fn options(count: Option<usize>, spacing: f64) -> (TabOptions, PlanOptions) {
        let tabs = TabOptions {
            count,
            spacing,
            width: 4.0,
            height: 1.0,
        };
        let mut opts = PlanOptions::plain(6.0);
        opts.tabs = Some(tabs);
        (tabs, opts)
    }

    #[test]
    fn tabs_sit_on_the_straight_sides_apart_and_clear_of_the_start() {
        let c = rounded_rectangle(100.0, 60.0, 8.0);
        let total: f64 = c.elements().iter().map(Element::length).sum();
        let cut = cut_on(c);
        let (tabs, opts) = options(Some(4), 0.0);
        let mut warnings = Vec::new();
        let placed = place_tabs(&cut, &tabs, &opts, &mut warnings).unwrap();
        assert!(warnings.is_empty(), "{warnings:?}");
        assert_eq!(placed.len(), 4);
        // Independent check: the sides of the rectangle (the lines) span these lengths along
        // the path (quarter arcs of radius 8 are 4π long, below 5 × 6 mm, so not gentle).
        let q = 4.0 * std::f64::consts::PI;
        let sides = [
            (q, q + 44.0),
            (2.0 * q + 44.0, 2.0 * q + 128.0),
            (3.0 * q + 128.0, 3.0 * q + 172.0),
            (4.0 * q + 172.0, 4.0 * q + 256.0),
        ];
        let mut middles: Vec<f64> = placed.iter().map(|t| t.at * total).collect();
        for (t, mid) in placed.iter().zip(&middles) {
            assert!((t.length - 10.0).abs() < 1e-12);
            let (a, b) = (mid - 5.0, mid + 5.0);
            assert!(
                sides
                    .iter()
                    .any(|&(s, e)| a >= s + 6.0 - 1e-9 && b <= e - 6.0 + 1e-9),
                "tab {a}..{b} not on a side"
            );
            // Straight entry: 2 tool diameters clear of the start both ways.
            assert!(a >= 12.0 - 1e-9 && b <= total - 12.0 + 1e-9);
        }
        middles.sort_by(f64::total_cmp);
        for w in middles.windows(2) {
            assert!(w[1] - w[0] >= 20.0 - 1e-9);
        }
    }

    #[test]
    fn spacing_gives_the_rounded_count_and_too_many_tabs_give_a_warning() {
        let c = rounded_rectangle(100.0, 60.0, 8.0);
        let total: f64 = c.elements().iter().map(Element::length).sum();
        let cut = cut_on(c);
        // 4 quarter arcs of radius 8 and 256 mm of sides: 306.3 mm / 70 mm = 4.38, rounded to 4.
        let (tabs, opts) = options(None, 70.0);
        let mut warnings = Vec::new();
        let placed = place_tabs(&cut, &tabs, &opts, &mut warnings).unwrap();
        assert_eq!(placed.len(), (total / 70.0).round() as usize);
        assert!(warnings.is_empty());
        // 50 tabs 20 mm apart cannot fit on 256 mm of sides less the margins.
        let (tabs, opts) = options(Some(50), 0.0);
        let placed = place_tabs(&cut, &tabs, &opts, &mut warnings).unwrap();
        assert!(placed.len() < 50 && !placed.is_empty());
        assert_eq!(warnings.len(), 1);
        assert!(warnings[0].starts_with(&format!("outline: {} of 50 tab(s)", placed.len())));
    }

    #[test]
    fn large_gentle_arcs_take_tabs_and_leads_push_them_away() {
        // Corner radius 40 ≥ 30 (5 tool diameters): the corner arcs are gentle too.
        let c = rounded_rectangle(200.0, 120.0, 40.0);
        let total: f64 = c.elements().iter().map(Element::length).sum();
        let cut = cut_on(c);
        let (tabs, mut opts) = options(Some(8), 0.0);
        opts.leads = LeadOptions {
            kind: LeadKind::LineArc,
            length: 5.0,
            radius: 4.0,
            overcut: 3.0,
            lead_out: true,
        };
        let mut warnings = Vec::new();
        let placed = place_tabs(&cut, &tabs, &opts, &mut warnings).unwrap();
        assert_eq!(placed.len(), 8, "{warnings:?}");
        for t in &placed {
            let (a, b) = (t.at * total - 5.0, t.at * total + 5.0);
            // After the overcut (3) + lead-out reach (9) + 12, before the lead-in's 9 + 12.
            assert!(a >= 24.0 - 1e-9 && b <= total - 21.0 + 1e-9, "{a} {b}");
        }
    }

    #[test]
    fn unusable_requests_and_ellipse_paths_get_no_tabs_and_a_warning() {
        let cut = cut_on(rounded_rectangle(100.0, 60.0, 8.0));
        let mut warnings = Vec::new();
        let (mut tabs, opts) = options(Some(0), 0.0);
        assert!(
            place_tabs(&cut, &tabs, &opts, &mut warnings)
                .unwrap()
                .is_empty()
        );
        tabs.count = Some(2);
        tabs.width = f64::NAN;
        assert!(
            place_tabs(&cut, &tabs, &opts, &mut warnings)
                .unwrap()
                .is_empty()
        );
        let e = crate::geom::Ellipse::new(Point::new(0.0, 0.0), 30.0, 20.0, 0.0).unwrap();
        let boss = PlannedCut::around_ellipse("boss", FeatureKind::Boss, e, -3.0);
        tabs.width = 4.0;
        assert!(
            place_tabs(&boss, &tabs, &opts, &mut warnings)
                .unwrap()
                .is_empty()
        );
        assert_eq!(warnings.len(), 3, "{warnings:?}");
        assert!(warnings[2].starts_with("boss:"));
    }
}
