//! One feature's planned cut: its exact path, plunge point, leads, tabs and edge.

use super::{CutSide, FeatureKind};
use crate::geom::{Edge, Element, Ellipse, ExactPath, Point};
use serde::Serialize;

/// A stretch of a cut left uncut: raised to the tab height on a mill or router, the beam or jet
/// off on the other kinds.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Tab {
    /// The tab's middle as a share of the path's length from its start (0 ≤ at < 1).
    pub at: f64,
    /// The length along the tool-centre path (mm) over which the tool does not cut: the tab's
    /// width plus the tool's diameter.
    pub length: f64,
}

/// A feature's own settings from its job-file feature, overriding the job's: on mills and
/// routers its cut depth and pass depth (mm, positive; a pocket in a 3 mm plate need not go to
/// the through-cut depth of the holes), and on every kind its feeds (mm/min).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize)]
pub struct OwnSettings {
    /// The depth below the work zero; `None`: the job's.
    pub depth: Option<f64>,
    /// The depth of each pass; `None`: the job's.
    pub stepdown: Option<f64>,
    /// The cutting feed; `None`: the job's.
    pub feed: Option<f64>,
    /// The feed down into the work; `None`: the job's.
    pub plunge_feed: Option<f64>,
    /// The spindle speed (rpm; mills and routers); `None`: the job's.
    pub spindle_speed: Option<f64>,
}

/// One feature's planned cut.
///
/// The fields are the plan stage's own (`pub(super)`): other stages read them through the
/// accessors below and build cuts only through the constructors.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlannedCut {
    /// This feature's own depth, passes and feeds, where its job-file feature gives them; the
    /// job's otherwise.
    pub(super) own: OwnSettings,
    pub(super) name: String,
    pub(super) kind: FeatureKind,
    pub(super) side: CutSide,
    /// The tool-centre path.
    pub(super) path: ExactPath,
    /// Where the tool enters the material (in the scrap).
    pub(super) plunge: Point,
    /// Pockets: the clearing rings, innermost first, cut before the lead-in. The tool feeds
    /// straight from the plunge point to the first ring's start and from each ring's end to the
    /// next ring's start.
    pub(super) clearing: Vec<ExactPath>,
    /// Exact moves from the plunge point (or the last clearing ring's end) to the path's start;
    /// empty for a straight move.
    pub(super) lead_in: Vec<Element>,
    /// How far past the start the path is cut again after closing (mm).
    pub(super) overcut: f64,
    /// Exact moves from the end of the overcut into the scrap; empty for none.
    pub(super) lead_out: Vec<Element>,
    /// Stretches left uncut.
    pub(super) tabs: Vec<Tab>,
    /// A finishing cut: made once, at the full depth, after the roughing passes.
    pub(super) full_depth_only: bool,
    /// The finished edge this cut makes.
    pub(super) edge: Edge,
    /// How far the tool centre may wander from the plunge point in every direction without
    /// touching the finished edge (mm): room for a helical entry. Zero when there is none.
    pub(super) entry_room: f64,
    /// Whether the scrap lies on the left of travel (climb milling with a clockwise spindle,
    /// and the usual thermal direction: holes counter-clockwise, outline and bosses clockwise);
    /// `false` for a conventional cut, which runs the other way with the scrap on the right.
    /// Leads, one-sided fits and side measurements follow it.
    pub(super) scrap_left: bool,
    /// Radial stock (mm) this cut leaves on the finished edge for a finishing cut that follows
    /// it: the finishing allowance on a roughing cut, 0 on a cut that makes the edge.
    pub(super) allowance: f64,
}

impl PlannedCut {
    /// The cut along the parallel curve of `ellipse` at signed distance `inset` from it (the tool
    /// radius; positive inside, negative outside), with the scrap on the left of travel: inside
    /// counter-clockwise, entered from the centre (at least b ≥ b²/a > r from the edge, and the
    /// move out along the major axis stays inside); outside clockwise, entered from one more tool
    /// radius out along the major axis. Checks nothing: [`plan_cuts`] refuses an inset that
    /// would gouge.
    pub fn around_ellipse(name: &str, kind: FeatureKind, ellipse: Ellipse, inset: f64) -> Self {
        let outside = inset < 0.0;
        let axis = crate::geom::Vec2::from_angle(ellipse.angle());
        PlannedCut::new(
            name,
            kind,
            if outside {
                CutSide::Outside
            } else {
                CutSide::Inside
            },
            ExactPath::EllipseParallel {
                ellipse,
                inset,
                start: 0.0,
                clockwise: outside,
            },
            if outside {
                ellipse.centre() + axis * (ellipse.a() - 2.0 * inset)
            } else {
                ellipse.centre()
            },
            Edge::Ellipse(ellipse),
        )
        .with_entry_room(inset.abs())
    }

    /// A cut along `path` entered at `plunge` by a straight move, making `edge`: no clearing,
    /// leads, overcut or tabs, every pass, no entry room (see [`PlannedCut::with_entry_room`]).
    pub fn new(
        name: &str,
        kind: FeatureKind,
        side: CutSide,
        path: ExactPath,
        plunge: Point,
        edge: Edge,
    ) -> Self {
        PlannedCut {
            own: OwnSettings::default(),
            name: name.to_string(),
            kind,
            side,
            path,
            plunge,
            clearing: Vec::new(),
            lead_in: Vec::new(),
            overcut: 0.0,
            lead_out: Vec::new(),
            tabs: Vec::new(),
            full_depth_only: false,
            edge,
            entry_room: 0.0,
            scrap_left: true,
            allowance: 0.0,
        }
    }

    /// The feature's name, for messages and the program's comments.
    pub fn name(&self) -> &str {
        &self.name
    }

    pub fn kind(&self) -> FeatureKind {
        self.kind
    }

    pub fn side(&self) -> CutSide {
        self.side
    }

    /// The tool-centre path.
    pub fn path(&self) -> &ExactPath {
        &self.path
    }

    /// Where the tool enters the material (in the scrap).
    pub fn plunge(&self) -> Point {
        self.plunge
    }

    /// Pockets: the clearing rings, innermost first, cut before the lead-in.
    pub fn clearing(&self) -> &[ExactPath] {
        &self.clearing
    }

    /// Exact moves from the plunge point (or the last clearing ring's end) to the path's start.
    pub fn lead_in(&self) -> &[Element] {
        &self.lead_in
    }

    /// How far past the start the path is cut again after closing (mm).
    pub fn overcut(&self) -> f64 {
        self.overcut
    }

    /// Exact moves from the end of the overcut into the scrap.
    pub fn lead_out(&self) -> &[Element] {
        &self.lead_out
    }

    /// Stretches left uncut.
    pub fn tabs(&self) -> &[Tab] {
        &self.tabs
    }

    /// Whether this is a finishing cut, made once at the full depth.
    pub fn full_depth_only(&self) -> bool {
        self.full_depth_only
    }

    /// The finished edge this cut makes.
    pub fn edge(&self) -> &Edge {
        &self.edge
    }

    /// Room for a helical entry round the plunge point (mm); zero when there is none.
    pub fn entry_room(&self) -> f64 {
        self.entry_room
    }

    /// Whether the scrap lies on the left of travel.
    pub fn scrap_left(&self) -> bool {
        self.scrap_left
    }

    /// Radial stock (mm) left on the finished edge for a finishing cut that follows.
    pub fn allowance(&self) -> f64 {
        self.allowance
    }

    /// This feature's own depth, passes and feeds, where it has them.
    pub fn own(&self) -> OwnSettings {
        self.own
    }

    /// The cut with its own depth, passes and feeds.
    pub fn with_own(mut self, own: OwnSettings) -> Self {
        self.own = own;
        self
    }

    /// Sets `entry_room` from the edge and the tool radius `r`: the plunge point's distance from
    /// the finished edge less the tool radius, if the plunge point is on the scrap side.
    pub fn with_entry_room(mut self, r: f64) -> Self {
        let scrap_side = match self.side {
            CutSide::Inside => self.edge.contains(self.plunge),
            CutSide::Outside => !self.edge.contains(self.plunge),
        };
        self.entry_room = if scrap_side {
            (self.edge.distance_to(self.plunge) - r).max(0.0)
        } else {
            0.0
        };
        self
    }

    /// The same cut travelled the other way, exactly: the path and the clearing rings reversed
    /// (each still starts and ends where it did), the scrap on the other side of travel, tabs
    /// kept where they are (their shares measured from the start the other way round). The plunge
    /// point, the edge and the entry room do not change. For cuts without leads (the planner
    /// reverses before [`super::leads::add_leads`]): leads, overcut and lead-out are not reversed.
    pub fn reversed(mut self) -> Self {
        self.path = self.path.reversed();
        self.clearing = self.clearing.iter().map(ExactPath::reversed).collect();
        self.scrap_left = !self.scrap_left;
        for t in &mut self.tabs {
            t.at = (1.0 - t.at).rem_euclid(1.0);
        }
        self
    }
}
