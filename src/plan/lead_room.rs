//! Where a lead may go: the finished edges it must keep the tool off, and the rules for one
//! cut's leads (see the rules in [`super::leads`]).

use super::{CutSide, FeatureKind, GOUGE_MARGIN, PlannedCut};
use crate::geom::{Bounds, BoxGrid, Edge, Element, Point};

/// Spacing (mm) of the points at which a lead is checked against the edges; at most
/// [`MAX_SAMPLES`] per piece.
pub const SAMPLE_SPACING: f64 = 0.02;

/// The most points checked on one piece of a lead.
pub const MAX_SAMPLES: usize = 4096;

/// What a lead must keep away from: one cut's finished edge.
pub(super) struct Obstacle {
    edge: Edge,
    side: CutSide,
    boss: bool,
}

impl Obstacle {
    pub(super) fn of(cut: &PlannedCut) -> Obstacle {
        Obstacle {
            edge: cut.edge.clone(),
            side: cut.side,
            boss: cut.kind == FeatureKind::Boss,
        }
    }

    /// Whether `p` is at least `limit` from the edge.
    pub(super) fn clear_by(&self, p: Point, limit: f64) -> bool {
        self.edge.distance_to(p) >= limit
    }

    /// Whether `p` lies on this cut's scrap side of its edge.
    pub(super) fn on_scrap_side(&self, p: Point) -> bool {
        match self.side {
            CutSide::Inside => Edge::contains(&self.edge, p),
            CutSide::Outside => !Edge::contains(&self.edge, p),
        }
    }
}

/// Every cut's finished edge, and a grid over their boxes (each holds its edge and, for a boss,
/// all inside it), so that a point is measured only against the edges that may be near it.
pub(super) struct Obstacles {
    list: Vec<Obstacle>,
    grid: BoxGrid,
}

impl Obstacles {
    pub(super) fn of(cuts: &[PlannedCut]) -> Obstacles {
        let list: Vec<Obstacle> = cuts.iter().map(Obstacle::of).collect();
        let boxes = list
            .iter()
            .map(|o| o.edge.bounding_box().unwrap_or(UNKNOWN_BOX))
            .collect();
        Obstacles {
            list,
            grid: BoxGrid::new(boxes),
        }
    }
}

/// A box that is not finite: the grid names such an item in every query.
const UNKNOWN_BOX: Bounds = Bounds {
    min: Point::new(f64::NAN, f64::NAN),
    max: Point::new(f64::NAN, f64::NAN),
};

/// The rules for the leads of one cut (module docs).
pub(super) struct Room<'a> {
    pub(super) r: f64,
    pub(super) obstacles: &'a Obstacles,
    pub(super) own: usize,
    /// Distance kept from the own edge on top of the tool radius (a roughing cut's allowance).
    pub(super) own_extra: f64,
    pub(super) pierce_clearance: Option<f64>,
    /// Mills and routers: lead arcs must be wider than this (the tool radius).
    pub(super) mill_arc_min: Option<f64>,
}

impl Room<'_> {
    pub(super) fn limit(&self) -> f64 {
        self.r * (1.0 - GOUGE_MARGIN)
    }

    fn own(&self) -> Option<&Obstacle> {
        self.obstacles.list.get(self.own)
    }

    /// On the own cut's scrap side and clear of its edge, outside every boss, and clear of every
    /// other edge by the limit.
    pub(super) fn point_ok(&self, p: Point) -> bool {
        let limit = self.limit();
        let own_ok = self
            .own()
            .is_none_or(|o| o.on_scrap_side(p) && o.clear_by(p, limit + self.own_extra));
        own_ok
            && self.obstacles.grid.all_near(p, limit, |k| {
                let o = &self.obstacles.list[k];
                k == self.own || (!(o.boss && Edge::contains(&o.edge, p)) && o.clear_by(p, limit))
            })
    }

    /// The point rules, and the pierce clearance from every edge on cut-through machines.
    pub(super) fn pierce_ok(&self, p: Point) -> bool {
        self.point_ok(p)
            && self.pierce_clearance.is_none_or(|c| {
                self.obstacles
                    .grid
                    .all_near(p, c, |k| self.obstacles.list[k].clear_by(p, c))
            })
    }

    pub(super) fn elements_ok(&self, elements: &[Element]) -> bool {
        elements
            .iter()
            .all(|e| samples(e).into_iter().all(|p| self.point_ok(p)))
    }

    /// The distance from `p` to the nearest finished edge, any cut's.
    pub(super) fn nearest_edge(&self, p: Point) -> f64 {
        let list = &self.obstacles.list;
        self.obstacles
            .grid
            .nearest(p, |k| list[k].edge.distance_to(p))
    }

    /// Room for a helical entry about `p` (see [`PlannedCut::entry_room`]), from every edge.
    pub(super) fn entry_room(&self, p: Point) -> f64 {
        let Some(own) = self.own() else {
            return 0.0;
        };
        if !own.on_scrap_side(p) {
            return 0.0;
        }
        let list = &self.obstacles.list;
        let others = self.obstacles.grid.nearest(p, |k| {
            if k == self.own {
                f64::INFINITY
            } else {
                list[k].edge.distance_to(p)
            }
        });
        let nearest = others.min(own.edge.distance_to(p) - self.own_extra);
        (nearest - self.r).max(0.0)
    }

    /// Whether an arc of this radius is allowed (mills: wider than the tool).
    pub(super) fn arc_allowed(&self, radius: f64) -> bool {
        self.mill_arc_min.is_none_or(|min| radius > min)
    }
}

/// Points along a piece every [`SAMPLE_SPACING`] mm or closer, both ends included.
pub(super) fn samples(e: &Element) -> Vec<Point> {
    let n = ((e.length() / SAMPLE_SPACING).ceil() as usize).clamp(1, MAX_SAMPLES);
    (0..=n)
        .map(|k| {
            let t = k as f64 / n as f64;
            e.point_at(t)
        })
        .collect()
}
