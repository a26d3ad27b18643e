//! Refusals before anything is written: bad settings, feeds and speeds above the profile's limits,
//! arcs for a lines-only profile, numbers that are not finite, and any position outside the
//! travel envelope (every run, arcs by their extremes, the helix); and, before any fitting, the
//! planned finished edges the tool cannot reach within the travel ([`edges_in_travel`]).

use super::arcs::arc_extremes;
use super::entries::helix_radius;
use super::error::PostError;
use super::number::format_number;
use super::profile::{ArcForm, Cutter, MachineProfile};
use super::setup::{ProgramSettings, Resolved};
use super::writer::units_point;
use crate::fit::FittedCut;
use crate::geom::Move;
use crate::geom::Point;
use crate::plan::{CutSide, PlannedCut};

pub(super) fn check_settings(s: &ProgramSettings, cutter: &Cutter) -> Result<(), PostError> {
    let positive = |setting, value: f64, hint| {
        if value.is_finite() && value > 0.0 {
            Ok(())
        } else {
            Err(PostError::BadSetting {
                setting,
                value,
                problem: "is not a positive number",
                hint,
            })
        }
    };
    match cutter {
        Cutter::Spindle(_) => {
            positive(
                "the tool diameter",
                s.tool_diameter,
                "give the cutter's diameter in mm",
            )?;
            positive(
                "the cut depth",
                s.depth,
                "give the depth below the work zero as a positive number of mm",
            )?;
            if let Some(f) = s.spindle_speed {
                positive("the spindle speed", f, "give the speed in rpm")?;
            }
            if let Some(a) = s.ramp_angle_deg
                && !(a > 0.0 && a <= 45.0)
            {
                return Err(PostError::BadSetting {
                    setting: "the ramp angle",
                    value: a,
                    problem: "is not between 0 and 45 degrees",
                    hint: "give the ramp angle in degrees, e.g. 3",
                });
            }
            if let Some(f) = s.stepdown {
                positive(
                    "the stepdown",
                    f,
                    "give the depth of each pass as a positive number of mm",
                )?;
            }
        }
        Cutter::Process(_) => positive(
            "the kerf width",
            s.tool_diameter,
            "give the kerf width in mm, or leave it to the machine profile",
        )?,
    }
    positive(
        "the tolerance",
        s.tolerance,
        "give the tolerance in mm, e.g. 0.01",
    )?;
    if let Some(f) = s.cut_feed {
        positive("the cut feed", f, "give the feed in mm/min")?;
    }
    if let Some(f) = s.plunge_feed {
        positive("the plunge feed", f, "give the feed in mm/min")?;
    }
    Ok(())
}

pub(super) fn check_feed(
    profile: &MachineProfile,
    which: &'static str,
    feed: f64,
) -> Result<(), PostError> {
    if feed > profile.max_feed() {
        let d = profile.feed_decimals();
        return Err(PostError::FeedTooHigh {
            which,
            value: format_number(feed, d),
            max: format_number(profile.max_feed(), d),
            units: profile.units(),
            profile: profile.name().to_string(),
        });
    }
    Ok(())
}

/// Checks a cut before anything is written: arcs allowed, every number finite, every position
/// it visits (arcs by their extremes) inside the travel envelope, in the profile's units.
pub(super) fn check_cut(
    cut: &FittedCut,
    profile: &MachineProfile,
    r: &Resolved,
) -> Result<(), PostError> {
    if cut.moves.is_empty() {
        return Err(PostError::EmptyPath {
            feature: cut.name.clone(),
            points: cut.moves.len() + 1,
        });
    }
    let runs = runs_of(cut);
    check_arcs_allowed(cut, &runs, profile)?;
    check_finite(cut, &runs)?;
    let envelope = Envelope {
        profile,
        feature: &cut.name,
    };
    envelope.check_heights(r)?;
    let (cut_feed, plunge_feed) = r.feeds_of(cut, profile.units());
    for (which, own, feed) in [
        ("the feature's cut feed", cut.own.feed, cut_feed),
        (
            "the feature's plunge feed",
            cut.own.plunge_feed,
            plunge_feed,
        ),
    ] {
        if own.is_some() {
            if !(feed.is_finite() && feed > 0.0) {
                return Err(PostError::BadSetting {
                    setting: which,
                    value: feed,
                    problem: "is not a positive number",
                    hint: "give the feed in mm/min",
                });
            }
            check_feed(profile, which, feed)?;
        }
    }
    if let (Some(own), Cutter::Spindle(s)) = (cut.own.spindle_speed, profile.cutter()) {
        if !(own.is_finite() && own > 0.0) {
            return Err(PostError::BadSetting {
                setting: "the feature's spindle speed",
                value: own,
                problem: "is not a positive number",
                hint: "give the speed in rpm",
            });
        }
        if own > s.max_speed {
            return Err(PostError::FeatureSpindleTooFast {
                feature: cut.name.clone(),
                value: own,
                max: s.max_speed,
                profile: profile.name().to_string(),
            });
        }
    }
    if let (Cutter::Spindle(_), Some(depth)) = (profile.cutter(), cut.own.depth) {
        if !(depth.is_finite() && depth > 0.0) {
            return Err(PostError::BadSetting {
                setting: "a feature's depth",
                value: depth,
                problem: "is not a positive number",
                hint: "give the feature's depth below the work zero in mm",
            });
        }
        envelope.check(
            "the feature's cut depth",
            'Z',
            -profile.units().from_mm(depth),
        )?;
    }
    if let (Cutter::Spindle(_), Some(step)) = (profile.cutter(), cut.own.stepdown)
        && !(step.is_finite() && step > 0.0)
    {
        return Err(PostError::BadSetting {
            setting: "a feature's stepdown",
            value: step,
            problem: "is not a positive number",
            hint: "give the depth of each of the feature's passes in mm",
        });
    }
    envelope.check_plunge(cut)?;
    for (start, run) in runs {
        envelope.check_run(start, run)?;
    }
    envelope.check_helix(cut, r)
}

/// Every run of the cut from where it starts: the clearing and lead-in from the plunge point,
/// the contour and overcut from the start, the lead-out from the overcut's end.
fn runs_of(cut: &FittedCut) -> [(Point, &[Move]); 5] {
    [
        (cut.plunge, &cut.clearing),
        (cut.lead_in_start(), &cut.lead_in),
        (cut.start, &cut.moves),
        (cut.start, &cut.overcut),
        (cut.lead_out_start(), &cut.lead_out),
    ]
}

/// Refuses arcs for a profile that writes straight moves only.
fn check_arcs_allowed(
    cut: &FittedCut,
    runs: &[(Point, &[Move])],
    profile: &MachineProfile,
) -> Result<(), PostError> {
    let has_arcs = runs
        .iter()
        .any(|(_, run)| run.iter().any(|m| matches!(m, Move::Arc { .. })));
    if has_arcs && profile.arc_form() == ArcForm::LinesOnly {
        return Err(PostError::ArcsNotAllowed {
            feature: cut.name.clone(),
            profile: profile.name().to_string(),
        });
    }
    Ok(())
}

/// Refuses a plunge point or a path with a coordinate that is not finite.
fn check_finite(cut: &FittedCut, runs: &[(Point, &[Move])]) -> Result<(), PostError> {
    if !cut.plunge.is_finite() {
        return Err(PostError::NotFinite {
            feature: cut.name.clone(),
            what: "the plunge point",
        });
    }
    let all_finite = runs.iter().all(|(from, run)| {
        from.is_finite()
            && run.iter().all(|m| match m {
                Move::Arc { to, centre, .. } => to.is_finite() && centre.is_finite(),
                Move::Line { to } => to.is_finite(),
            })
    });
    if !all_finite {
        return Err(PostError::NotFinite {
            feature: cut.name.clone(),
            what: "the path",
        });
    }
    Ok(())
}

/// The profile's travel envelope, checked for one feature on exact values in the profile's units.
struct Envelope<'a> {
    profile: &'a MachineProfile,
    feature: &'a str,
}

impl Envelope<'_> {
    /// Refuses `value` on `axis` outside the travel, naming `what` moves there.
    fn check(&self, what: &'static str, axis: char, value: f64) -> Result<(), PostError> {
        let profile = self.profile;
        let (min, max) = profile.travel().limits(axis);
        if value < min || value > max {
            let d = if axis == 'Z' {
                profile.z_decimals()
            } else {
                profile.xy_decimals()
            };
            return Err(PostError::OutsideEnvelope {
                feature: self.feature.to_string(),
                what,
                axis,
                value: format_number(value, d),
                limits: format!("{} .. {}", format_number(min, d), format_number(max, d)),
                units: profile.units(),
            });
        }
        Ok(())
    }

    /// The safe height, and the retract height and floor (mill, router) or the pierce and cut
    /// heights (laser, plasma, waterjet).
    fn check_heights(&self, r: &Resolved) -> Result<(), PostError> {
        self.check("the safe height", 'Z', self.profile.safe_height())?;
        match self.profile.cutter() {
            Cutter::Spindle(s) => {
                self.check("the retract height", 'Z', s.retract_height)?;
                self.check("the cut depth", 'Z', r.floor)?;
            }
            Cutter::Process(p) => {
                self.check("the pierce height", 'Z', p.pierce_height)?;
                self.check("the cut height", 'Z', p.cut_height)?;
            }
        }
        Ok(())
    }

    /// The plunge (or pierce) point.
    fn check_plunge(&self, cut: &FittedCut) -> Result<(), PostError> {
        let plunge = units_point(self.profile.units(), cut.plunge);
        let entry = match self.profile.cutter() {
            Cutter::Spindle(_) => "the plunge point",
            Cutter::Process(_) => "the pierce point",
        };
        self.check(entry, 'X', plunge.x)?;
        self.check(entry, 'Y', plunge.y)
    }

    /// Every point of a run from `start`, arcs by their extremes.
    fn check_run(&self, start: Point, run: &[Move]) -> Result<(), PostError> {
        let units = self.profile.units();
        let mut from = units_point(units, start);
        self.check("the tool path", 'X', from.x)?;
        self.check("the tool path", 'Y', from.y)?;
        for m in run {
            let (what, points) = match *m {
                Move::Line { to } => ("the tool path", vec![units_point(units, to)]),
                Move::Arc { to, centre, ccw } => (
                    "an arc of the tool path",
                    arc_extremes(
                        from,
                        units_point(units, to),
                        units_point(units, centre),
                        ccw,
                    ),
                ),
            };
            for q in &points {
                self.check(what, 'X', q.x)?;
                self.check(what, 'Y', q.y)?;
            }
            from = units_point(units, m.end());
        }
        Ok(())
    }

    /// A helical entry reaches one helix radius round the plunge point.
    fn check_helix(&self, cut: &FittedCut, r: &Resolved) -> Result<(), PostError> {
        let profile = self.profile;
        let helix = helix_radius(r.tool_diameter);
        if profile.spindle().is_some() && r.helical && cut.entry_room >= helix {
            let plunge = units_point(profile.units(), cut.plunge);
            let reach = profile.units().from_mm(helix);
            for (dx, dy) in [(reach, 0.0), (-reach, 0.0), (0.0, reach), (0.0, -reach)] {
                self.check("the helical entry", 'X', plunge.x + dx)?;
                self.check("the helical entry", 'Y', plunge.y + dy)?;
            }
        }
        Ok(())
    }
}

/// Refuses, before anything is fitted, a finished edge that the tool (its radius outside the
/// edge) cannot reach within the profile's X and Y travel: the same refusal the program's own
/// envelope check gives later, but before the fit spends its time (or its digits: a part placed
/// kilometres away) on a path that cannot run.
pub fn edges_in_travel(
    cuts: &[PlannedCut],
    profile: &MachineProfile,
    tool_radius: f64,
) -> Result<(), PostError> {
    let u = profile.units();
    let t = profile.travel();
    let limits = [
        ('X', u.to_mm(t.x_min), u.to_mm(t.x_max)),
        ('Y', u.to_mm(t.y_min), u.to_mm(t.y_max)),
    ];
    let d = profile.xy_decimals();
    for c in cuts {
        let Some(b) = c.edge().bounding_box() else {
            continue;
        };
        let ends = [(b.min.x, b.max.x), (b.min.y, b.max.y)];
        for ((axis, min, max), (lo, hi)) in limits.into_iter().zip(ends) {
            // The edge, and for a cut outside it (the outline) the tool centre a radius beyond.
            let r = if c.side() == CutSide::Outside {
                tool_radius
            } else {
                0.0
            };
            let (lo, hi) = (lo - r, hi + r);
            let past = if lo < min {
                Some(lo)
            } else if hi > max {
                Some(hi)
            } else {
                None
            };
            if let Some(value) = past.or_else(|| (!lo.is_finite() || !hi.is_finite()).then_some(lo))
            {
                return Err(PostError::OutsideEnvelope {
                    feature: c.name().to_string(),
                    what: if r > 0.0 {
                        "the tool beside its finished edge"
                    } else {
                        "its finished edge"
                    },
                    axis,
                    value: format_number(u.from_mm(value), d),
                    limits: format!(
                        "{} .. {}",
                        format_number(u.from_mm(min), d),
                        format_number(u.from_mm(max), d)
                    ),
                    units: u,
                });
            }
        }
    }
    Ok(())
}
