//! A cut on a mill or router: its passes, each entered and then cut as the clearing, lead-in,
//! contour (rising over each tab), overcut and lead-out.

use super::error::PostError;
use super::profile::Spindle;
use super::setup::{ProgramSettings, Resolved, Written, pass_depths};
use super::writer::{Writer, units_point};
use crate::fit::FittedCut;
use crate::geom::Move;

/// The depth and pass depth of `cut` (mm): its own where its feature gives them, else the
/// job's.
pub(super) fn cut_depth(cut: &FittedCut, settings: &ProgramSettings) -> (f64, Option<f64>) {
    (
        cut.own.depth.unwrap_or(settings.depth),
        cut.own.stepdown.or(settings.stepdown),
    )
}

impl Writer<'_> {
    /// Every pass of a cut on a mill or router ([`pass_depths`]; one pass at the full depth for a
    /// finishing cut): over the plunge point at the retract height, the entry into the pass's
    /// depth, the runs; then up to the retract height. Returns what the last pass's contour took.
    pub(super) fn passes(
        &mut self,
        cut: &FittedCut,
        s: &Spindle,
        settings: &ProgramSettings,
        r: &Resolved,
    ) -> Result<Written, PostError> {
        let units = self.profile.units();
        let (depth, stepdown) = cut_depth(cut, settings);
        let (cut_feed, plunge_feed) = r.feeds_of(cut, units);
        let floors = if cut.full_depth_only {
            vec![depth]
        } else {
            pass_depths(depth, stepdown)
        };
        let tab_top = -units.from_mm(depth - settings.tab_height);
        let mut done = Written::default();
        let mut z_prev = 0.0;
        let passes = floors.len();
        for (k, depth) in floors.into_iter().enumerate() {
            let z = -units.from_mm(depth);
            if passes > 1 {
                self.comment(&format!("pass {} of {passes}", k + 1));
            }
            self.rapid_z(s.retract_height);
            self.rapid_xy(units_point(units, cut.plunge));
            // Down to the top of the stock, or to the floor the last pass left around
            // the plunge point, then into the new depth.
            if settings.ramp_angle_deg.is_some() {
                self.feed_z(z_prev, plunge_feed);
            }
            let consumed = self.enter(cut, settings, z_prev, z, plunge_feed)?;
            let tabs = if cut.tabs.is_empty() || z >= tab_top {
                None
            } else {
                Some((tab_top, z))
            };
            done = self.cut_runs(cut, consumed, cut_feed, tabs)?;
            z_prev = z;
        }
        self.rapid_z(s.retract_height);
        Ok(done)
    }

    /// The runs of a cut at one depth on a mill or router: the clearing and the lead-in (less the
    /// `skip` entry moves the ramp already made), the contour (rising to the tab top over each
    /// tab when `tabs` gives the tab top and the floor), the overcut and the lead-out, each after
    /// a comment naming it. Returns what the contour took.
    pub(super) fn cut_runs(
        &mut self,
        cut: &FittedCut,
        skip: usize,
        feed: f64,
        tabs: Option<(f64, f64)>,
    ) -> Result<Written, PostError> {
        let name = &cut.name;
        let skip_clearing = skip.min(cut.clearing.len());
        let skip_lead = skip - skip_clearing;
        if cut.clearing.len() > skip_clearing {
            self.comment("clearing");
            let from = if skip_clearing == 0 {
                cut.plunge
            } else {
                cut.clearing[skip_clearing - 1].end()
            };
            self.run(name, from, &cut.clearing[skip_clearing..], feed, None)?;
        }
        if cut.lead_in.len() > skip_lead {
            self.comment("lead-in");
            let from = if skip_lead == 0 {
                cut.lead_in_start()
            } else {
                cut.lead_in[skip_lead - 1].end()
            };
            self.run(name, from, &cut.lead_in[skip_lead..], feed, None)?;
        }
        self.comment("contour");
        let done = match tabs {
            None => self.run(name, cut.start, &cut.moves, feed, None)?,
            Some((top, floor)) => {
                let mut done = Written::default();
                let (pieces, inside) = tab_pieces(cut);
                let mut from = cut.start;
                for (k, (piece, in_tab)) in pieces.iter().zip(&inside).enumerate() {
                    if *in_tab {
                        // The tab: rise to its top, follow the contour over it, go back down.
                        self.comment("tab");
                        self.feed_z(top, feed);
                    } else if k > 0 && inside[k - 1] {
                        self.comment("contour");
                    }
                    let w = self.run(name, from, piece, feed, None)?;
                    done.lines += w.lines;
                    done.arcs += w.arcs;
                    if *in_tab {
                        self.feed_z(floor, feed);
                    }
                    from = piece.last().map_or(from, Move::end);
                }
                done
            }
        };
        self.leave(cut, feed)?;
        Ok(done)
    }

    /// The overcut and the lead-out, each after a comment naming it.
    pub(super) fn leave(&mut self, cut: &FittedCut, feed: f64) -> Result<(), PostError> {
        if !cut.overcut.is_empty() {
            self.comment("overcut");
            self.run(&cut.name, cut.start, &cut.overcut, feed, None)?;
        }
        if !cut.lead_out.is_empty() {
            self.comment("lead-out");
            self.run(&cut.name, cut.lead_out_start(), &cut.lead_out, feed, None)?;
        }
        Ok(())
    }
}

/// The contour of `cut` cut at its tab spans: the pieces in order, and for each whether it lies
/// over a tab.
pub(super) fn tab_pieces(cut: &FittedCut) -> (Vec<Vec<Move>>, Vec<bool>) {
    let at: Vec<f64> = cut.tabs.iter().flat_map(|&(a, b)| [a, b]).collect();
    let pieces = crate::geom::moves::split_at(cut.start, &cut.moves, &at);
    // Piece k starts at the k-th cut; odd cuts open a tab, even ones close it. A cut at the
    // very start or end of the run makes no piece, so walk the lengths instead of counting.
    let mut inside = Vec::with_capacity(pieces.len());
    let mut from = cut.start;
    let mut walked = 0.0;
    for piece in &pieces {
        let len = crate::geom::moves::total_length(from, piece);
        let mid = walked + 0.5 * len;
        inside.push(cut.tabs.iter().any(|&(a, b)| mid > a && mid < b));
        walked += len;
        from = piece.last().map_or(from, Move::end);
    }
    (pieces, inside)
}
