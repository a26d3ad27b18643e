//! Entries into the material on a mill or router: a helix about the plunge point where there is
//! room, a zig-zag ramp along the first entry move elsewhere, or a straight plunge.

use super::error::PostError;
use super::profile::{ArcForm, MachineProfile};
use super::setup::ProgramSettings;
use super::writer::{Writer, units_point};
use crate::fit::FittedCut;
use crate::geom::Move;
use crate::geom::Point;

impl Writer<'_> {
    /// Into the material on a mill or router, at the plunge point, from `z_from` (where the tool
    /// is) down to `z_to`: straight down without a ramp angle; with one, a helix about the plunge
    /// point where the cut leaves room for it, otherwise a zig-zag along the first entry move
    /// (the first clearing move or the first lead-in move), never steeper than the angle. When
    /// that move is shorter than one output step and the plunge point is the contour's start (a
    /// path entered on itself), the zig-zag runs along the contour's first move instead, an even
    /// number of legs so that it ends at the start; only a cut with neither plunges straight.
    /// Returns how many entry moves the zig-zag has already made (0 or 1).
    pub(super) fn enter(
        &mut self,
        cut: &FittedCut,
        settings: &ProgramSettings,
        z_from: f64,
        z_to: f64,
        feed: f64,
    ) -> Result<usize, PostError> {
        let Some(angle) = settings.ramp_angle_deg else {
            self.comment("entry: straight plunge");
            self.feed_z(z_to, feed);
            return Ok(0);
        };
        let units = self.profile.units();
        let drop = z_from - z_to;
        if drop <= 0.0 {
            return Ok(0);
        }
        let slope = angle.to_radians().tan();
        if helical(settings, self.profile) {
            let radius = helix_radius(settings.tool_diameter);
            if cut.entry_room >= radius {
                self.comment("entry: helix");
                self.helix(cut, radius, z_from, z_to, slope, feed)?;
                return Ok(0);
            }
        }
        // A move shorter than one output step cannot carry a ramp.
        let step = 10f64.powi(-(self.profile.xy_decimals() as i32));
        let usable = |from: Point, m: &Move| units.from_mm(m.length(from)) >= step;
        let first = cut.clearing.first().or(cut.lead_in.first()).copied();
        if let Some(first) = first.filter(|m| usable(cut.plunge, m)) {
            // An odd number of legs ends at the move's end: forward, back, forward, ...
            self.comment("entry: zig-zag ramp");
            self.zig_zag(cut, cut.plunge, first, z_from, z_to, slope, feed, true)?;
            return Ok(1);
        }
        // The tool stands on the contour's start with nothing to cut before it.
        let half_step = 0.5 * units.to_mm(step);
        let at_start = cut.clearing.is_empty()
            && cut.plunge.distance(cut.start) <= half_step
            && crate::geom::moves::total_length(cut.plunge, &cut.lead_in) <= half_step;
        match cut.moves.first().copied() {
            Some(first) if at_start && usable(cut.start, &first) => {
                // An even number of legs ends back at the contour's start.
                self.comment("entry: zig-zag ramp");
                self.zig_zag(cut, cut.start, first, z_from, z_to, slope, feed, false)?;
            }
            _ => {
                self.comment("entry: straight plunge");
                self.feed_z(z_to, feed)
            }
        }
        Ok(0)
    }

    /// Back and forth along the move `m` from `from`, descending from `z_from` to `z_to` no
    /// steeper than `slope` along the move (each leg drops at most `slope` × its length): an odd
    /// number of legs, ending at the move's end, when `end_at_far_end`, else an even number,
    /// ending back at `from`.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn zig_zag(
        &mut self,
        cut: &FittedCut,
        from: Point,
        m: Move,
        z_from: f64,
        z_to: f64,
        slope: f64,
        feed: f64,
        end_at_far_end: bool,
    ) -> Result<(), PostError> {
        let units = self.profile.units();
        let length = units.from_mm(m.length(from));
        let drop = z_from - z_to;
        let mut legs = (drop / slope / length).ceil().max(1.0) as usize;
        if legs.is_multiple_of(2) == end_at_far_end {
            legs += 1;
        }
        let back = crate::geom::moves::reversed(from, &[m]).1;
        for k in 0..legs {
            let z0 = z_from - drop * k as f64 / legs as f64;
            let z1 = z_from - drop * (k + 1) as f64 / legs as f64;
            if k % 2 == 0 {
                self.run(&cut.name, from, &[m], feed, Some((z0, z1)))?;
            } else {
                self.run(&cut.name, m.end(), &back, feed, Some((z0, z1)))?;
            }
        }
        Ok(())
    }

    /// A helical entry about the plunge point: out to the helix at `radius` (mm), round it in
    /// half-turn arcs descending no steeper than `slope` along the arc to `z_to`, once more round
    /// at the floor, and back to the plunge point. It turns the way the cut does: counter-
    /// clockwise for a climb cut (the bore's wall on the right of travel: climb milling with a
    /// clockwise spindle), clockwise for a conventional one.
    pub(super) fn helix(
        &mut self,
        cut: &FittedCut,
        radius: f64,
        z_from: f64,
        z_to: f64,
        slope: f64,
        feed: f64,
    ) -> Result<(), PostError> {
        let units = self.profile.units();
        let c = cut.plunge;
        let east = Point::new(c.x + radius, c.y);
        let west = Point::new(c.x - radius, c.y);
        let ccw = cut.scrap_left;
        let half_turn = units.from_mm(std::f64::consts::PI * radius);
        let drop = z_from - z_to;
        let halves = (drop / slope / half_turn).ceil().max(1.0) as usize;
        self.feed_xy(units_point(units, east), feed);
        let mut at = east;
        for k in 0..halves {
            let to = if at == east { west } else { east };
            let z0 = z_from - drop * k as f64 / halves as f64;
            let z1 = z_from - drop * (k + 1) as f64 / halves as f64;
            let arc = Move::Arc { to, centre: c, ccw };
            self.run(&cut.name, at, &[arc], feed, Some((z0, z1)))?;
            at = to;
        }
        // Once round at the floor to clear the helix's bottom, then back to the centre.
        for _ in 0..2 {
            let to = if at == east { west } else { east };
            let arc = Move::Arc { to, centre: c, ccw };
            self.run(&cut.name, at, &[arc], feed, None)?;
            at = to;
        }
        self.feed_xy(units_point(units, c), feed);
        Ok(())
    }
}

/// Whether entries may be helical: asked for, with a ramp angle, and the profile writes arcs (a
/// helix is a run of arcs).
pub(super) fn helical(settings: &ProgramSettings, profile: &MachineProfile) -> bool {
    settings.helical_entry
        && settings.ramp_angle_deg.is_some()
        && profile.arc_form() != ArcForm::LinesOnly
}

/// The radius of a helical entry's path (mm) for a tool of diameter `d`: a quarter of the
/// diameter, so that the helix cuts a bore of 1.5 d and leaves no core under a tool that does not
/// cut at its centre (common practice: helix diameter at least half the tool's,
/// docs/sources.md P4.3).
pub(super) fn helix_radius(d: f64) -> f64 {
    0.25 * d
}
