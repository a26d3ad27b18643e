//! Where a lead may go: the finished edges it must keep the tool off, and the rules for one
//! cut's leads (see the rules in [`super::leads`]).

use super::leads::{MAX_SAMPLES, SAMPLE_SPACING};
use super::{CutSide, FeatureKind, GOUGE_MARGIN, PlannedCut};
use crate::geom::{Bounds, Edge, Element, Point};

/// What a lead must keep away from: one cut's finished edge.
pub(super) struct Obstacle {
    edge: Edge,
    side: CutSide,
    boss: bool,
    /// A cheap region holding the edge, for skipping far edges: a disc (centre, radius) or a
    /// box (min, max).
    reach: Reach,
}

pub(super) enum Reach {
    Disc(Point, f64),
    Box(Bounds),
    Unknown,
}

impl Obstacle {
    pub(super) fn of(cut: &PlannedCut) -> Obstacle {
        let reach = match &cut.edge {
            Edge::Ellipse(e) => Reach::Disc(e.centre(), e.a()),
            Edge::Contour(c) => match c.bounding_box() {
                Some(b) => Reach::Box(b),
                None => Reach::Unknown,
            },
        };
        Obstacle {
            edge: cut.edge.clone(),
            side: cut.side,
            boss: cut.kind == FeatureKind::Boss,
            reach,
        }
    }

    /// A lower bound of the distance from `p` to the edge (0 when unknown).
    pub(super) fn lower_bound(&self, p: Point) -> f64 {
        match self.reach {
            Reach::Disc(c, a) => (p.distance(c) - a).max(0.0),
            Reach::Box(b) => b.distance_to(p),
            Reach::Unknown => 0.0,
        }
    }

    /// Whether `p` is at least `limit` from the edge.
    pub(super) fn clear_by(&self, p: Point, limit: f64) -> bool {
        self.lower_bound(p) >= limit || self.edge.distance_to(p) >= limit
    }

    /// Whether `p` lies on this cut's scrap side of its edge.
    pub(super) fn on_scrap_side(&self, p: Point) -> bool {
        match self.side {
            CutSide::Inside => Edge::contains(&self.edge, p),
            CutSide::Outside => !Edge::contains(&self.edge, p),
        }
    }
}

/// The rules for the leads of one cut (module docs).
pub(super) struct Room<'a> {
    pub(super) r: f64,
    pub(super) obstacles: &'a [Obstacle],
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

    pub(super) fn point_ok(&self, p: Point) -> bool {
        let limit = self.limit();
        self.obstacles.iter().enumerate().all(|(k, o)| {
            if k == self.own {
                o.on_scrap_side(p) && o.clear_by(p, limit + self.own_extra)
            } else {
                !(o.boss && Edge::contains(&o.edge, p)) && o.clear_by(p, limit)
            }
        })
    }

    /// The point rules, and the pierce clearance from every edge on cut-through machines.
    pub(super) fn pierce_ok(&self, p: Point) -> bool {
        self.point_ok(p)
            && self
                .pierce_clearance
                .is_none_or(|c| self.obstacles.iter().all(|o| o.clear_by(p, c)))
    }

    pub(super) fn elements_ok(&self, elements: &[Element]) -> bool {
        elements
            .iter()
            .all(|e| samples(e).into_iter().all(|p| self.point_ok(p)))
    }

    /// The distance from `p` to the nearest finished edge, any cut's.
    pub(super) fn nearest_edge(&self, p: Point) -> f64 {
        self.obstacles
            .iter()
            .map(|o| o.edge.distance_to(p))
            .fold(f64::INFINITY, f64::min)
    }

    /// Room for a helical entry about `p` (see [`PlannedCut::entry_room`]), from every edge.
    pub(super) fn entry_room(&self, p: Point) -> f64 {
        let Some(own) = self.obstacles.get(self.own) else {
            return 0.0;
        };
        if !own.on_scrap_side(p) {
            return 0.0;
        }
        let nearest = self
            .obstacles
            .iter()
            .enumerate()
            .map(|(k, o)| {
                let extra = if k == self.own { self.own_extra } else { 0.0 };
                o.edge.distance_to(p) - extra
            })
            .fold(f64::INFINITY, f64::min);
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
