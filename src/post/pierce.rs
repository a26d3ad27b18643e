//! A cut on a laser, plasma table or waterjet: the pierce sequence, and the process off over each
//! tab with a fresh pierce after it.

use super::error::PostError;
use super::passes::tab_pieces;
use super::profile::Process;
use super::setup::{Resolved, Written};
use super::writer::Writer;
use crate::fit::FittedCut;
use crate::geom::Move;

impl Writer<'_> {
    /// A cut on a laser, plasma table or waterjet, the tool over the pierce point at the safe
    /// height: down to the pierce height, the process on, the pierce dwell, a feed down to the
    /// cut height, the runs, the process off.
    pub(super) fn pierced(
        &mut self,
        cut: &FittedCut,
        p: &Process,
        r: &Resolved,
    ) -> Result<Written, PostError> {
        self.rapid_z(p.pierce_height);
        self.block(p.on.clone());
        self.dwell(p.pierce_dwell);
        let (cut_feed, plunge_feed) = r.feeds_of(cut, self.profile.units());
        self.feed_z(p.cut_height, plunge_feed);
        let gaps = (!cut.tabs.is_empty()).then_some(p);
        let done = self.cut_runs_process(cut, cut_feed, plunge_feed, gaps)?;
        self.block(p.off.clone());
        Ok(done)
    }

    /// The runs of a cut on a laser, plasma table or waterjet, the process already on at the
    /// pierce point: the lead-in, the contour (with `gaps`, the process off over each tab, moved
    /// across at the pierce height and pierced again after it), the overcut and the lead-out.
    pub(super) fn cut_runs_process(
        &mut self,
        cut: &FittedCut,
        feed: f64,
        down_feed: f64,
        gaps: Option<&Process>,
    ) -> Result<Written, PostError> {
        let name = &cut.name;
        if !cut.lead_in.is_empty() {
            self.comment("lead-in");
            self.run(name, cut.lead_in_start(), &cut.lead_in, feed, None)?;
        }
        self.comment("contour");
        let done = match gaps {
            None => self.run(name, cut.start, &cut.moves, feed, None)?,
            Some(p) => {
                let mut done = Written::default();
                let (pieces, inside) = tab_pieces(cut);
                let mut from = cut.start;
                for (k, (piece, &in_tab)) in pieces.iter().zip(&inside).enumerate() {
                    if in_tab {
                        // The tab: the process off across it, pierced again after it.
                        self.comment("tab");
                        self.block(p.off.clone());
                        self.rapid_z(p.pierce_height);
                    } else if k > 0 && inside[k - 1] {
                        self.comment("contour");
                    }
                    let w = self.run(name, from, piece, feed, None)?;
                    done.lines += w.lines;
                    done.arcs += w.arcs;
                    if in_tab {
                        self.block(p.on.clone());
                        self.dwell(p.pierce_dwell);
                        self.feed_z(p.cut_height, down_feed);
                    }
                    from = piece.last().map_or(from, Move::end);
                }
                done
            }
        };
        self.leave(cut, feed)?;
        Ok(done)
    }
}
