//! Sorting the closed cut shapes into the outline and the holes: no crossings, no hole inside a
//! hole, one outermost shape.

use super::crossing::{flatten_contour, flatten_ellipse, polygons_cross};
use super::error::{ChainError, fmt_handles};
use super::{InnerBoundary, InnerShape};
use crate::geom::{Bounds, BoxGrid, Contour, Element, bounds_of};
use crate::geom::{Ellipse, Point};

/// A closed cut shape, with what the classification needs.
pub(super) struct Shape {
    kind: ShapeKind,
    description: String,
    area: f64,
    polygon: Vec<Point>,
    low: Point,
    high: Point,
    sample: Point,
    first_handle: String,
}

enum ShapeKind {
    Contour(Contour),
    Ellipse(Ellipse, String),
}

impl Shape {
    pub(super) fn from_contour(c: Contour) -> Shape {
        let polygon = flatten_contour(&c);
        let (low, high) = c.bounds().unwrap_or((Point::ORIGIN, Point::ORIGIN));
        let kinds: Vec<&str> = c
            .elements()
            .iter()
            .map(|e| match e {
                Element::Line(_) => "line",
                Element::Arc(_) => "arc",
            })
            .collect();
        let description = if c.elements().len() == 1 && kinds[0] == "arc" {
            format!(
                "the circle on layer {} (handle {})",
                c.layer(),
                fmt_handles(c.handles())
            )
        } else {
            format!(
                "the contour on layer {} (handles {})",
                c.layer(),
                fmt_handles(c.handles())
            )
        };
        Shape {
            area: c.signed_area().abs(),
            sample: c.elements()[0].start(),
            first_handle: c.handles().first().cloned().unwrap_or_default(),
            polygon,
            low,
            high,
            description,
            kind: ShapeKind::Contour(c),
        }
    }

    pub(super) fn from_ellipse(e: Ellipse, layer: String, handle: String) -> Shape {
        let polygon = flatten_ellipse(&e);
        let (low, high) = bounds_of(&polygon).unwrap_or((Point::ORIGIN, Point::ORIGIN));
        Shape {
            description: format!("the ELLIPSE on layer {layer} (handle {handle})"),
            area: e.area(),
            sample: e.point(0.0),
            first_handle: handle,
            polygon,
            low,
            high,
            kind: ShapeKind::Ellipse(e, layer),
        }
    }

    fn contains(&self, p: Point) -> bool {
        match &self.kind {
            ShapeKind::Contour(c) => c.contains(p),
            ShapeKind::Ellipse(e, _) => e.contains(p),
        }
    }

    fn bounds(&self) -> Bounds {
        Bounds {
            min: self.low,
            max: self.high,
        }
    }

    fn boxes_overlap(&self, other: &Shape) -> bool {
        self.low.x <= other.high.x
            && other.low.x <= self.high.x
            && self.low.y <= other.high.y
            && other.low.y <= self.high.y
    }
}

type Classified = (Option<Contour>, Vec<InnerBoundary>, Vec<String>);

/// The outline, the holes (named `hole 1`, … in order of the lower-left corner of their boxes,
/// then by first handle) and warnings, from the cut shapes. See [`super::build_part`].
pub(super) fn classify(shapes: Vec<Shape>) -> Result<Classified, ChainError> {
    let (mut shapes, mut warnings) = drop_copies(shapes);
    refuse_crossings(&shapes)?;
    let parents = parents_of(&shapes);
    refuse_nesting(&shapes, &parents)?;
    let nested = parents.iter().any(|p| !p.is_empty());
    let outline_index = outline_index(&shapes, &parents, nested, &mut warnings)?;
    let outline = match outline_index {
        Some(i) => take_outline(&mut shapes, i, nested)?,
        None => None,
    };
    Ok((outline, name_holes(shapes), warnings))
}

/// Two shapes closer than this (mm) at every element's start, middle and end (or in centre,
/// semi-axes and angle, for ellipses) are one shape drawn twice.
pub const SAME_SHAPE_MM: f64 = 1e-6;

/// Whether two elements are the same piece: start, middle and end within [`SAME_SHAPE_MM`].
fn same_element(a: &Element, b: &Element) -> bool {
    [0.0, 0.5, 1.0]
        .iter()
        .all(|&u| a.point_at(u).distance(b.point_at(u)) <= SAME_SHAPE_MM)
}

/// Whether two shapes are one drawn twice: the same ellipse, or the same pieces in the same
/// order round (both run counter-clockwise), whichever piece each starts at.
fn same_shape(a: &Shape, b: &Shape) -> bool {
    if a.low.distance(b.low) > SAME_SHAPE_MM || a.high.distance(b.high) > SAME_SHAPE_MM {
        return false;
    }
    match (&a.kind, &b.kind) {
        (ShapeKind::Ellipse(e, _), ShapeKind::Ellipse(f, _)) => {
            let turn = (e.angle() - f.angle()).rem_euclid(std::f64::consts::PI);
            let turn = turn.min(std::f64::consts::PI - turn) * e.a();
            e.centre().distance(f.centre()) <= SAME_SHAPE_MM
                && (e.a() - f.a()).abs() <= SAME_SHAPE_MM
                && (e.b() - f.b()).abs() <= SAME_SHAPE_MM
                && (turn <= SAME_SHAPE_MM || e.a() - e.b() <= SAME_SHAPE_MM)
        }
        (ShapeKind::Contour(c), ShapeKind::Contour(d)) => {
            let (p, q) = (c.elements(), d.elements());
            let n = p.len();
            n == q.len()
                && (0..n)
                    .filter(|&k| same_element(&p[0], &q[k]))
                    .any(|k| (0..n).all(|i| same_element(&p[i], &q[(i + k) % n])))
        }
        _ => false,
    }
}

/// Shapes drawn twice (a copy left on top of itself) are kept once, with a warning naming both;
/// the rest as they were, in order.
fn drop_copies(shapes: Vec<Shape>) -> (Vec<Shape>, Vec<String>) {
    let grid = grid_of(&shapes);
    let mut near = Vec::new();
    let mut copy = vec![false; shapes.len()];
    let mut warnings = Vec::new();
    for i in 0..shapes.len() {
        if copy[i] {
            continue;
        }
        grid.overlapping(&shapes[i].bounds(), &mut near);
        near.sort_unstable();
        for &j in near.iter().filter(|&&j| j > i) {
            if !copy[j] && same_shape(&shapes[i], &shapes[j]) {
                copy[j] = true;
                let mut said = shapes[j].description.clone();
                if let Some(first) = said.get_mut(0..1) {
                    first.make_ascii_uppercase();
                }
                warnings.push(format!(
                    "{said} is the same as {}: drawn twice. It is cut once; delete the copy \
                     from the drawing to quiet this warning",
                    shapes[i].description
                ));
            }
        }
    }
    let kept = shapes
        .into_iter()
        .zip(copy)
        .filter_map(|(s, c)| (!c).then_some(s))
        .collect();
    (kept, warnings)
}

/// The shapes' boxes on a grid, so that each shape meets only the shapes whose boxes overlap
/// its own.
fn grid_of(shapes: &[Shape]) -> BoxGrid {
    BoxGrid::new(shapes.iter().map(Shape::bounds).collect())
}

/// Crossings first: without them, each pair is either nested or apart. Pairs are taken in
/// order (the first shape, then the second), as a scan of every pair would meet them.
fn refuse_crossings(shapes: &[Shape]) -> Result<(), ChainError> {
    let grid = grid_of(shapes);
    let mut near = Vec::new();
    for i in 0..shapes.len() {
        grid.overlapping(&shapes[i].bounds(), &mut near);
        for &j in near.iter().filter(|&&j| j > i) {
            if shapes[i].boxes_overlap(&shapes[j])
                && let Some(at) = polygons_cross(&shapes[i].polygon, &shapes[j].polygon)
            {
                return Err(ChainError::Crossing {
                    first: shapes[i].description.clone(),
                    second: shapes[j].description.clone(),
                    at,
                });
            }
        }
    }
    Ok(())
}

/// `parents[i]`: the shapes shape i lies inside.
fn parents_of(shapes: &[Shape]) -> Vec<Vec<usize>> {
    let n = shapes.len();
    let grid = grid_of(shapes);
    let mut near = Vec::new();
    let mut parents: Vec<Vec<usize>> = vec![Vec::new(); n];
    for i in 0..n {
        grid.overlapping(&shapes[i].bounds(), &mut near);
        for &j in &near {
            if i != j
                && shapes[j].area > shapes[i].area
                && shapes[i].boxes_overlap(&shapes[j])
                && shapes[j].contains(shapes[i].sample)
            {
                parents[i].push(j);
            }
        }
    }
    parents
}

/// Refuses a shape inside two others (a hole inside a hole).
fn refuse_nesting(shapes: &[Shape], parents: &[Vec<usize>]) -> Result<(), ChainError> {
    if let Some(i) = (0..shapes.len()).find(|&i| parents[i].len() >= 2) {
        let mut ps = parents[i].clone();
        ps.sort_by(|&a, &b| shapes[a].area.total_cmp(&shapes[b].area));
        return Err(ChainError::Nested {
            inner: shapes[i].description.clone(),
            middle: shapes[ps[0]].description.clone(),
            outer: shapes[ps[ps.len() - 1]].description.clone(),
        });
    }
    Ok(())
}

/// Which shape is the outline: the one outermost shape when some are nested, a lone shape, or
/// none (several shapes apart: all holes, with a warning).
fn outline_index(
    shapes: &[Shape],
    parents: &[Vec<usize>],
    nested: bool,
    warnings: &mut Vec<String>,
) -> Result<Option<usize>, ChainError> {
    let n = shapes.len();
    if nested {
        let roots: Vec<usize> = (0..n).filter(|&i| parents[i].is_empty()).collect();
        if roots.len() > 1 {
            return Err(ChainError::SeveralOutlines {
                shapes: roots
                    .iter()
                    .map(|&i| shapes[i].description.clone())
                    .collect(),
            });
        }
        return Ok(Some(roots[0]));
    }
    if n == 1 {
        return Ok(Some(0));
    }
    if n > 1 {
        warnings.push(format!(
            "no closed shape holds the others, so all {n} are taken as holes in a plate that \
             is not drawn (no outline is cut); if they are separate parts, draw one part per \
             drawing"
        ));
    }
    Ok(None)
}

/// Takes shape `i` out as the outline. An ELLIPSE holding others is refused; a lone ELLIPSE is
/// a hole (cut inside), not an outline, and stays among the shapes.
fn take_outline(
    shapes: &mut Vec<Shape>,
    i: usize,
    nested: bool,
) -> Result<Option<Contour>, ChainError> {
    let s = shapes.remove(i);
    match s.kind {
        ShapeKind::Contour(c) => Ok(Some(c)),
        ShapeKind::Ellipse(..) => {
            if nested {
                return Err(ChainError::EllipseOutline {
                    shape: s.description,
                });
            }
            shapes.push(s);
            Ok(None)
        }
    }
}

/// The remaining shapes as holes, in order and named.
fn name_holes(mut shapes: Vec<Shape>) -> Vec<InnerBoundary> {
    shapes.sort_by(|a, b| {
        a.low
            .x
            .total_cmp(&b.low.x)
            .then(a.low.y.total_cmp(&b.low.y))
            .then_with(|| a.first_handle.cmp(&b.first_handle))
    });
    shapes
        .into_iter()
        .enumerate()
        .map(|(i, s)| {
            let name = format!("hole {}", i + 1);
            match s.kind {
                ShapeKind::Contour(c) => InnerBoundary {
                    name,
                    layer: c.layer().to_string(),
                    shape: InnerShape::Contour(c),
                },
                ShapeKind::Ellipse(e, layer) => InnerBoundary {
                    name,
                    layer,
                    shape: InnerShape::Ellipse(e),
                },
            }
        })
        .collect()
}
