//! Leads: how the tool reaches each contour from the plunge or pierce point, and leaves it, in
//! the scrap.
//!
//! # Shapes
//!
//! At the path's start `S` let `T` be the unit tangent in the direction of travel and `N` the
//! unit normal pointing into the scrap: into a hole or opening, out of the outline or a boss.
//! `N` is found from the cut's side, not from its direction, so conventional cuts get the same
//! leads mirrored. With the straight length `L` and the arc radius `R`:
//!
//! | kind | lead-in, from the plunge or pierce point to `S` | lead-out, from the overcut's end `E` |
//! |---|---|---|
//! | straight | a straight move from the planned plunge point | none: the cut stops on the path |
//! | line | `S + L N` → `S`, along the normal | `E` → `E + L N` |
//! | arc | a quarter circle about `S + R N`, from `S + R N − R T` to `S` | a quarter circle about `E + R N`, from `E` to `E + R N + R T` |
//! | line-arc | `S + (R + L) N − R T` → `S + R N − R T` along `−N`, then the arc | the arc, then `L` further along `N` |
//!
//! The arc's circle touches the path at `S` from the scrap side (its centre lies on the normal),
//! so the tool joins the path along its tangent and leaves no dwell mark; the straight part of a
//! line-arc lead is tangent to the arc. NISTIR 6556 App. B.3.1 builds its cutter-compensation
//! entry the same way (a tangent line, then a tangent arc of radius above the tool radius); conicut
//! programs the tool centre, so only the arc-radius rule carries over (below). The lead-out is the
//! lead-in's mirror image about the normal at `E`, the point `overcut` mm along the path past the
//! start (exact: arc length along the ellipse's parallel curve by Simpson's rule, or along the
//! contour's pieces).
//!
//! # Where a lead may go
//!
//! Every point of a lead, sampled every [`SAMPLE_SPACING`](super::lead_room::SAMPLE_SPACING) mm along each piece (arcs included),
//! must keep the tool off the finished part:
//!
//! * on its own cut's scrap side of the finished edge (arcs of a drawn contour followed exactly,
//!   not by chords), at least `r (1 − GOUGE_MARGIN)` from it (`r` the tool radius; a roughing cut
//!   keeps its finishing allowance too);
//! * at least `r (1 − GOUGE_MARGIN)` from every other cut's finished edge, and outside every
//!   boss;
//! * on a laser, plasma table or waterjet (`opts.pierce_clearance` is `Some(c)`), the pierce
//!   point (the lead's first point) at least `c` from every finished edge: one kerf plus the
//!   pierce crater (common practice, docs/sources.md P4.3);
//! * on a mill or router (`opts.pierce_clearance` is `None`), every lead arc wider than the tool:
//!   radius above `r` (NISTIR 6556 App. B.3.1). An arc radius asked for that is not above `r` is
//!   replaced by [`ARC_OVER_TOOL`]` · r`, with a warning.
//!
//! Between two samples the distance to an edge can dip by at most half the spacing (it changes
//! no faster than the point moves); that can happen only where a lead runs along an edge, which
//! happens only where it joins the path (there it moves away from the edge). The program is
//! checked again after it is written (`check::scrap`), within the job's tolerance.
//!
//! # Finding room
//!
//! For a cut along an ellipse's parallel curve the start may move (the anomaly `start` of
//! [`ExactPath::EllipseParallel`]): an inside cut tries the ends of the minor axis first, where
//! the path is flattest and the ellipse widest, then the ends of the major axis; an outside cut
//! keeps its start first. A contour keeps its start. At each size, full, then halved up to
//! [`HALVINGS`] times (never below the tool radius for a mill's arc), every start is tried; the
//! first lead that keeps all the rules is taken, and a shrunk one is reported in a warning. On
//! a cut-through machine a lead whose only fault is a pierce point too near an edge has its
//! straight part lengthened along the normal (an arc lead gets one) until the pierce point
//! clears, with a warning: in a small hole this gives a short lead from near the centre.
//! When none fits (a small hole), the cut falls back on a straight move from the planned plunge
//! point (the centre of a round or elliptical hole: "a lead from near the centre", §4.3), with a
//! warning; on a cut-through machine whose planned pierce point is too near an edge, on a line
//! lead along the normal long enough to clear it. When even that breaks a rule the plan is
//! refused ([`PlanError::NoRoomForLead`]): a lead is never put into the part silently.
//!
//! Pockets keep their plunge point (their clearing starts there); their lead-in starts at the end
//! of the last clearing ring and runs straight to the lead's first point, then along the lead.
//!
//! The lead-out has the lead-in's shape and size (half the size on holes, openings and pockets of
//! cut-through machines: "keep lead-outs short on holes", the slug may drop, §4.3), shrunk by
//! halves when it does not fit, and left out with a warning when nothing fits.
//!
//! # Overcut and entry room
//!
//! `overcut` is set on every cut, at most half the path's length (longer ones are cut down with a
//! warning). `entry_room` is set again from the final plunge point: its distance from the nearest
//! finished edge, any cut's, less the tool radius (and a roughing cut's allowance from its own
//! edge), zero unless the point is on the cut's scrap side.

use super::lead_room::{Obstacles, Room, SAMPLE_SPACING};
use super::lead_shape::{frame_at, lead_in_shape, lead_out_shape, path_length};
use super::{CutSide, LeadKind, LeadOptions, PlanError, PlanOptions, PlannedCut};
use crate::geom::{Element, ExactPath, Point, Segment};
use rayon::prelude::*;
use std::f64::consts::{FRAC_PI_2, PI, TAU};

/// How many times a lead that does not fit is halved before the cut falls back on a straight
/// entry: down to 1/8 of the size asked for, below which a lead is hardly better than a straight
/// move (our choice).
pub const HALVINGS: u32 = 3;

/// On a mill or router, the lead arc's radius used when the radius asked for is not above the
/// tool radius: 1.25 tool radii (our choice; NISTIR 6556 App. B.3.1 asks only for more than one).
pub const ARC_OVER_TOOL: f64 = 1.25;

/// Points this close (mm) count as one when deciding whether a link move is needed.
const SAME_POINT: f64 = 1e-9;

/// Adds the lead-in, overcut and lead-out that `opts.leads` asks for to every cut, in the scrap
/// (see the module docs for the shapes and rules). Pushes one warning per cut whose leads were
/// shrunk, replaced or left out, naming the feature and what was done.
///
/// Refuses lead settings that are not usable numbers ([`PlanError::BadLead`]) and a cut for which
/// no entry keeps the rules ([`PlanError::NoRoomForLead`]).
pub fn add_leads(
    cuts: &mut [PlannedCut],
    opts: &PlanOptions,
    warnings: &mut Vec<String>,
) -> Result<(), PlanError> {
    let r = opts.tool_diameter / 2.0;
    let mut leads = checked(&opts.leads, opts.pierce_clearance)?;
    let mill = opts.pierce_clearance.is_none();
    if mill && uses_arc(leads.kind) && leads.radius <= r {
        let radius = ARC_OVER_TOOL * r;
        warnings.push(format!(
            "the lead arc radius {} mm is not larger than the {} mm tool's radius {r} mm (NISTIR \
             6556 App. B.3.1 asks for an entry arc wider than the tool): arcs of {ARC_OVER_TOOL} × \
             {r} = {radius} mm are used instead",
            leads.radius, opts.tool_diameter
        ));
        leads.radius = radius;
    }
    let obstacles = Obstacles::of(cuts);
    // Each cut's leads depend only on the finished edges, so the cuts are done in parallel
    // (rayon); warnings and the first error come in cut order, as in a serial run.
    let done: Vec<Result<Option<String>, PlanError>> = cuts
        .par_iter_mut()
        .enumerate()
        .map(|(i, cut)| {
            let room = Room {
                r,
                obstacles: &obstacles,
                own: i,
                own_extra: cut.allowance.max(0.0),
                pierce_clearance: opts.pierce_clearance,
                mill_arc_min: mill.then_some(r),
            };
            leads_of_one_cut(cut, &room, &leads, mill)
        })
        .collect();
    for warning in done {
        warnings.extend(warning?);
    }
    Ok(())
}

/// Places one cut's lead-in, overcut and lead-out and its entry room; the warning naming what
/// was shrunk, replaced or left out, if anything.
fn leads_of_one_cut(
    cut: &mut PlannedCut,
    room: &Room,
    leads: &LeadOptions,
    mill: bool,
) -> Result<Option<String>, PlanError> {
    let mut notes = Vec::new();
    let scale = place_lead_in(cut, room, leads, &mut notes)?;
    set_overcut(cut, leads.overcut, &mut notes);
    if leads.lead_out && leads.kind != LeadKind::Straight {
        let mut base = scale.unwrap_or(1.0);
        if !mill && cut.side == CutSide::Inside {
            base *= 0.5;
        }
        place_lead_out(cut, room, leads, base, &mut notes);
    }
    cut.entry_room = room.entry_room(cut.plunge);
    Ok((!notes.is_empty()).then(|| format!("{}: {}", cut.name, notes.join("; "))))
}

/// The lead settings, checked: lengths finite and not negative, a straight part for line leads
/// and an arc for arc leads.
fn checked(leads: &LeadOptions, pierce_clearance: Option<f64>) -> Result<LeadOptions, PlanError> {
    let bad = |setting: &'static str, value: f64, hint: &'static str| PlanError::BadLead {
        setting,
        value,
        hint,
    };
    let usable = |v: f64| v.is_finite() && v >= 0.0;
    if !usable(leads.length) {
        return Err(bad(
            "lead length",
            leads.length,
            "give zero or a positive number of mm (--lead-length, or lead_length in the machine \
             profile)",
        ));
    }
    if !usable(leads.radius) {
        return Err(bad(
            "lead radius",
            leads.radius,
            "give zero or a positive number of mm (--lead-radius, or lead_radius in the machine \
             profile)",
        ));
    }
    if !usable(leads.overcut) {
        return Err(bad(
            "overcut",
            leads.overcut,
            "give zero or a positive number of mm (--overcut, or overcut in the machine profile)",
        ));
    }
    if let Some(c) = pierce_clearance
        && !usable(c)
    {
        return Err(bad(
            "pierce clearance",
            c,
            "give zero or a positive number of mm (pierce_clearance in the machine profile)",
        ));
    }
    if matches!(leads.kind, LeadKind::Line | LeadKind::LineArc) && leads.length <= 0.0 {
        return Err(bad(
            "lead length",
            leads.length,
            "a line or line-arc lead needs a straight part longer than 0 mm: give --lead-length, \
             set lead_length in the machine profile, or choose --lead arc",
        ));
    }
    if uses_arc(leads.kind) && leads.radius <= 0.0 {
        return Err(bad(
            "lead radius",
            leads.radius,
            "an arc or line-arc lead needs an arc radius above 0 mm: give --lead-radius, set \
             lead_radius in the machine profile, or choose --lead line",
        ));
    }
    Ok(*leads)
}

fn uses_arc(kind: LeadKind) -> bool {
    matches!(kind, LeadKind::Arc | LeadKind::LineArc)
}

fn kind_word(kind: LeadKind) -> &'static str {
    match kind {
        LeadKind::Straight => "straight",
        LeadKind::Line => "line",
        LeadKind::Arc => "arc",
        LeadKind::LineArc => "line-arc",
    }
}

/// A lead's size in words, e.g. `4 mm arc` or `2 mm line and 1 mm arc`.
fn size_words(kind: LeadKind, length: f64, radius: f64) -> String {
    match kind {
        LeadKind::Straight => "straight move".into(),
        LeadKind::Line => format!("{} mm line", round3(length)),
        LeadKind::Arc => format!("{} mm arc", round3(radius)),
        LeadKind::LineArc => format!("{} mm line and {} mm arc", round3(length), round3(radius)),
    }
}

/// `v` rounded to 0.001 for messages.
fn round3(v: f64) -> f64 {
    (v * 1000.0).round() / 1000.0
}

/// Where a cut's path may start, for the lead search.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Start {
    /// Where the plan put it.
    Planned,
    /// At this anomaly of an ellipse's parallel curve.
    Anomaly(f64),
    /// In the middle of this piece of a contour.
    MiddleOf(usize),
}

/// The most contour pieces whose middles are tried as starts (the longest first).
const CONTOUR_STARTS: usize = 8;

/// The starts to try for a cut: anomalies for an ellipse's parallel curve (inside: the ends of
/// the minor axis, then the planned start and its opposite; outside: the planned start first);
/// for a contour the planned start, then the middles of its longest pieces (a start at a sharp
/// inside corner, where two pieces meet, may leave no room for a lead that a piece's middle has).
fn start_candidates(cut: &PlannedCut) -> Vec<Start> {
    let start = match &cut.path {
        ExactPath::EllipseParallel { start, .. } => *start,
        ExactPath::Contour(c) => {
            let mut pieces: Vec<(usize, f64)> = c
                .elements()
                .iter()
                .map(Element::length)
                .enumerate()
                .collect();
            // Longest first; of equal length, the earlier.
            pieces.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.cmp(&b.0)));
            return std::iter::once(Start::Planned)
                .chain(
                    pieces
                        .into_iter()
                        .take(CONTOUR_STARTS)
                        .map(|(i, _)| Start::MiddleOf(i)),
                )
                .collect();
        }
    };
    let list = match cut.side {
        CutSide::Inside => [FRAC_PI_2, 3.0 * FRAC_PI_2, start, start + PI],
        CutSide::Outside => [start, start + PI, FRAC_PI_2, 3.0 * FRAC_PI_2],
    };
    let mut out: Vec<f64> = Vec::new();
    for t in list {
        let t = t.rem_euclid(TAU);
        let seen = out.iter().any(|u| {
            let d = (t - u).rem_euclid(TAU);
            d.min(TAU - d) < 1e-12
        });
        if !seen {
            out.push(t);
        }
    }
    out.into_iter().map(Start::Anomaly).collect()
}

/// `path` from `start`.
fn with_start(path: &ExactPath, start: Start) -> ExactPath {
    match (path, start) {
        (
            ExactPath::EllipseParallel {
                ellipse,
                inset,
                clockwise,
                ..
            },
            Start::Anomaly(t),
        ) => ExactPath::EllipseParallel {
            ellipse: *ellipse,
            inset: *inset,
            start: t,
            clockwise: *clockwise,
        },
        (ExactPath::Contour(c), Start::MiddleOf(i)) => c
            .starting_within(i, 0.5)
            .map_or_else(|| path.clone(), ExactPath::Contour),
        _ => path.clone(),
    }
}

/// Where a pocket's lead-in begins: the end of its last clearing ring (a closed ring ends where
/// it starts); `None` for cuts without clearing.
fn ring_end(cut: &PlannedCut) -> Option<Point> {
    cut.clearing.last().map(ExactPath::start_point)
}

/// Places the lead-in on `cut` and returns the share of the asked size used (`None` for a
/// straight entry, asked for or fallen back on).
fn place_lead_in(
    cut: &mut PlannedCut,
    room: &Room,
    leads: &LeadOptions,
    notes: &mut Vec<String>,
) -> Result<Option<f64>, PlanError> {
    if leads.kind == LeadKind::Straight {
        if straight_ok(cut, room) {
            return Ok(None);
        }
    } else {
        if let Some(found) = search(cut, room, leads.kind, leads.length, leads.radius)? {
            let scale = found.scale;
            if scale < 1.0 {
                notes.push(format!(
                    "the {} lead was shrunk to {} to fit",
                    kind_word(leads.kind),
                    size_words(leads.kind, leads.length * scale, leads.radius * scale)
                ));
            }
            extension_note(found, room, notes);
            return Ok(Some(scale));
        }
        if straight_ok(cut, room) {
            let from = ring_end(cut).unwrap_or(cut.plunge);
            notes.push(format!(
                "no room for the {} lead ({}): entered by a straight move from ({:.3}, {:.3})",
                kind_word(leads.kind),
                size_words(leads.kind, leads.length, leads.radius),
                from.x,
                from.y
            ));
            return Ok(None);
        }
    }
    // A cut-through machine whose planned pierce point is too near an edge: a line lead along
    // the normal, long enough to clear it.
    if let Some(c) = room.pierce_clearance
        && cut.clearing.is_empty()
    {
        let length = leads.length.max(c).max(room.r);
        if let Some(Found { scale, extension }) = search(cut, room, LeadKind::Line, length, 0.0)? {
            let pierce = cut.plunge;
            notes.push(format!(
                "the planned pierce point was nearer than {c} mm to an edge: pierced at \
                 ({:.3}, {:.3}) and entered by a {}",
                pierce.x,
                pierce.y,
                size_words(LeadKind::Line, length * scale + extension, 0.0)
            ));
            return Ok(Some(scale));
        }
    }
    Err(PlanError::NoRoomForLead {
        feature: cut.name.clone(),
        detail: match room.pierce_clearance {
            Some(c) => format!(
                "no pierce point was found in the scrap at least {c} mm (the profile's \
                 pierce_clearance) from every finished edge with a lead that keeps the \
                 {} mm kerf clear of them. Lower pierce_clearance in the machine profile, \
                 shorten the lead (--lead-length, --lead-radius), or enlarge the feature",
                2.0 * room.r
            ),
            None => format!(
                "no entry was found that keeps the {} mm tool clear of every finished edge. Use \
                 a smaller tool or a shorter lead (--lead-length, --lead-radius)",
                2.0 * room.r
            ),
        },
    })
}

/// Notes a lead lengthened for the pierce clearance.
fn extension_note(found: Found, room: &Room, notes: &mut Vec<String>) {
    if let (true, Some(c)) = (found.extension > 0.0, room.pierce_clearance) {
        notes.push(format!(
            "the lead's straight part was lengthened by {} mm to keep the pierce point {c} mm \
             from every edge",
            round3(found.extension)
        ));
    }
}

/// Whether the planned straight entry keeps the rules: the move from the plunge point (or a
/// pocket's last ring) to the path's start, and the pierce point.
fn straight_ok(cut: &PlannedCut, room: &Room) -> bool {
    let start = cut.path.start_point();
    match ring_end(cut) {
        Some(from) => room.elements_ok(&[Element::Line(Segment::new(from, start))]),
        None => {
            room.pierce_ok(cut.plunge)
                && room.elements_ok(&[Element::Line(Segment::new(cut.plunge, start))])
        }
    }
}

/// A lead found by [`search`]: its share of the asked size, and how far (mm) its straight part
/// was lengthened to keep the pierce clearance (0 when it was not).
#[derive(Debug, Clone, Copy)]
struct Found {
    scale: f64,
    extension: f64,
}

/// The lead `kind` with its straight part lengthened by `extension` (an arc gains one).
fn extended(kind: LeadKind, length: f64, extension: f64) -> (LeadKind, f64) {
    match kind {
        LeadKind::Arc => (LeadKind::LineArc, extension),
        other => (other, length + extension),
    }
}

/// Tries the lead of `kind` at full size and halved up to [`HALVINGS`] times, at every start
/// candidate; sets the first that keeps the rules on `cut` (its start, lead-in and plunge point)
/// and returns what was used. On a cut-through machine, a lead whose only fault is a pierce
/// point nearer than the clearance to an edge has its straight part lengthened along the normal
/// (an arc lead gets one) by 1, 1.5, 2 and 3 times the shortfall, plus one sample spacing.
fn search(
    cut: &mut PlannedCut,
    room: &Room,
    kind: LeadKind,
    length: f64,
    radius: f64,
) -> Result<Option<Found>, PlanError> {
    let from = ring_end(cut);
    // The lead's moves: a pocket's link from its last ring, then the shape.
    let with_link = |shape: Vec<Element>| -> Option<(Point, Vec<Element>)> {
        let first = shape.first().map(Element::start)?;
        let mut elements = Vec::with_capacity(shape.len() + 1);
        if let Some(p) = from
            && p.distance(first) > SAME_POINT
        {
            elements.push(Element::Line(Segment::new(p, first)));
        }
        elements.extend(shape);
        Some((first, elements))
    };
    for k in 0..=HALVINGS {
        let scale = 0.5f64.powi(k as i32);
        let (l, rad) = (length * scale, radius * scale);
        if uses_arc(kind) && !room.arc_allowed(rad) {
            break;
        }
        for start in start_candidates(cut) {
            let path = with_start(&cut.path, start);
            let Some(f) = frame_at(&path, cut.side, 0.0) else {
                continue;
            };
            let Some((first, elements)) = with_link(lead_in_shape(kind, &f, l, rad)) else {
                continue;
            };
            if !room.elements_ok(&elements) {
                continue;
            }
            let mut found = None;
            if from.is_some() || room.pierce_ok(first) {
                found = Some((first, elements, 0.0));
            } else if let Some(c) = room.pierce_clearance {
                let shortfall = (c - room.nearest_edge(first)).max(0.0);
                for factor in [1.0, 1.5, 2.0, 3.0] {
                    let extension = factor * shortfall + SAMPLE_SPACING;
                    let (kind2, l2) = extended(kind, l, extension);
                    let Some((first2, elements2)) = with_link(lead_in_shape(kind2, &f, l2, rad))
                    else {
                        continue;
                    };
                    if room.pierce_ok(first2) && room.elements_ok(&elements2) {
                        found = Some((first2, elements2, extension));
                        break;
                    }
                }
            }
            if let Some((first, elements, extension)) = found {
                cut.path = path;
                cut.lead_in = elements;
                if from.is_none() {
                    cut.plunge = first;
                }
                return Ok(Some(Found { scale, extension }));
            }
        }
    }
    Ok(None)
}

/// Sets the overcut, at most half the path's length.
fn set_overcut(cut: &mut PlannedCut, overcut: f64, notes: &mut Vec<String>) {
    let half = 0.5 * path_length(&cut.path);
    if overcut > half {
        notes.push(format!(
            "the {} mm overcut is more than half the path ({:.3} mm): cut down to that",
            round3(overcut),
            half
        ));
        cut.overcut = half;
    } else {
        cut.overcut = overcut;
    }
}

/// Places the lead-out at the end of the overcut: the lead-in's shape at `base` times the asked
/// size, halved up to [`HALVINGS`] times until it fits; none (with a note) when nothing fits.
fn place_lead_out(
    cut: &mut PlannedCut,
    room: &Room,
    leads: &LeadOptions,
    base: f64,
    notes: &mut Vec<String>,
) {
    let Some(f) = frame_at(&cut.path, cut.side, cut.overcut) else {
        return;
    };
    for k in 0..=HALVINGS {
        let scale = base * 0.5f64.powi(k as i32);
        let (l, rad) = (leads.length * scale, leads.radius * scale);
        if uses_arc(leads.kind) && !room.arc_allowed(rad) {
            break;
        }
        let shape = lead_out_shape(leads.kind, &f, l, rad);
        if room.elements_ok(&shape) {
            if k > 0 {
                notes.push(format!(
                    "the lead-out was shrunk to a {} to fit",
                    size_words(leads.kind, l, rad)
                ));
            }
            cut.lead_out = shape;
            return;
        }
    }
    notes.push(format!(
        "no room for the {} lead-out: the cut ends on the path",
        kind_word(leads.kind)
    ));
}

#[cfg(test)]
#[path = "leads_tests.rs"]
mod tests;
