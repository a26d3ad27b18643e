//! Block inserts: each INSERT replaced by its block's entities, placed in the drawing.
//!
//! An INSERT places block `name` at `location` (in the INSERT's OCS) turned by `rotation`
//! degrees and scaled by `x_scale_factor` and `y_scale_factor` about the block's base point,
//! repeated on a grid of `column_count × row_count` cells `column_spacing` and `row_spacing`
//! apart along the turned axes (DXF reference, INSERT groups 10, 41–44, 50, 70, 71). A block
//! point `p` goes to `location + R·S·(p − base)` plus the cell's offset `R·(i·cs, j·rs)`, then
//! through the INSERT's extrusion (±Z). Blocks may hold INSERTs of other blocks, to
//! [`MAX_NESTING`] levels; a block that inserts itself is refused.
//!
//! The map is affine, so lines stay lines and polylines of straight pieces stay so. A map that is
//! a similarity (equal scales, mirrored or not) keeps arcs and circles as arcs and circles; an
//! unequal scale turns a circle into an ellipse and an arc into an elliptical arc (the image of
//! a pair of conjugate semi-diameters, made principal through the shape matrix `U·Uᵀ`). A
//! polyline with arcs under unequal scale is refused: its arcs would be elliptical arcs inside a
//! contour, which the later stages do not cut.
//!
//! Entities of a block drawn on layer `0` take the INSERT's layer (the DXF convention); the
//! others keep their own. Each gets the handle `INSERT/ENTITY` (the INSERT's handle, then the
//! block entity's), and the INSERT's line.

use super::ReadError;
use super::convert::{Converted, convert};
use super::entity::{Entity, EntityKind};
use super::notes::{Notes, label};
use super::ocs::Ctx;
use crate::geom::{ArcSegment, Ellipse, Point, Vec2};
use std::collections::HashMap;
use std::f64::consts::TAU;

/// The deepest chain of blocks inserting blocks that is expanded.
pub const MAX_NESTING: usize = 16;

/// How close (relative to the scale) a map must be to a similarity to keep arcs as arcs.
pub const SIMILARITY_TOLERANCE: f64 = 1e-12;

/// The drawing's blocks by name (compared ignoring case).
pub(super) struct Blocks<'a> {
    by_name: HashMap<String, &'a dxf::Block>,
}

impl<'a> Blocks<'a> {
    pub(super) fn of(drawing: &'a dxf::Drawing) -> Self {
        Blocks {
            by_name: drawing
                .blocks()
                .map(|b| (b.name.to_lowercase(), b))
                .collect(),
        }
    }
}

/// An affine map of the plane: `p ↦ m·p + t`, `m` by columns.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Affine {
    /// The images of the unit vectors (the matrix's columns).
    x: Vec2,
    y: Vec2,
    t: Vec2,
}

impl Affine {
    /// Scaling by `s` about the origin (drawing units to mm).
    pub(super) fn scaling(s: f64) -> Affine {
        Affine {
            x: Vec2::new(s, 0.0),
            y: Vec2::new(0.0, s),
            t: Vec2::new(0.0, 0.0),
        }
    }

    const IDENTITY: Affine = Affine {
        x: Vec2::new(1.0, 0.0),
        y: Vec2::new(0.0, 1.0),
        t: Vec2::new(0.0, 0.0),
    };

    fn vector(&self, v: Vec2) -> Vec2 {
        self.x * v.x + self.y * v.y
    }

    fn point(&self, p: Point) -> Point {
        Point::ORIGIN + self.vector(p - Point::ORIGIN) + self.t
    }

    /// `self` after `inner`: `p ↦ self(inner(p))`.
    fn after(&self, inner: &Affine) -> Affine {
        Affine {
            x: self.vector(inner.x),
            y: self.vector(inner.y),
            t: self.vector(inner.t) + self.t,
        }
    }

    fn det(&self) -> f64 {
        self.x.cross(self.y)
    }

    /// The scale when the map is a similarity (turning, uniform scaling, perhaps a mirror).
    fn similarity_scale(&self) -> Option<f64> {
        let (sx, sy) = (self.x.length(), self.y.length());
        let tol = SIMILARITY_TOLERANCE * sx.max(sy);
        ((sx - sy).abs() <= tol && self.x.dot(self.y).abs() <= tol * sx.max(sy)).then_some(sx)
    }
}

/// What one expansion needs besides the INSERT itself.
pub(super) struct Expansion<'a, 'b> {
    pub(super) blocks: &'b Blocks<'a>,
    pub(super) ctx: &'b Ctx<'b>,
    pub(super) line: usize,
    pub(super) out: &'b mut Vec<Entity>,
    pub(super) notes: &'b mut Notes,
}

/// The map of one INSERT cell `(i, j)` from block coordinates to those of the space the
/// INSERT sits in (both in drawing units).
fn cell_map(ins: &dxf::entities::Insert, base: &dxf::Point, i: f64, j: f64) -> Affine {
    let (s, c) = ins.rotation.to_radians().sin_cos();
    let (ux, uy) = (Vec2::new(c, s), Vec2::new(-s, c));
    let x = ux * ins.x_scale_factor;
    let y = uy * ins.y_scale_factor;
    let cell = ux * (i * ins.column_spacing) + uy * (j * ins.row_spacing);
    let location = Vec2::new(ins.location.x, ins.location.y) + cell;
    Affine {
        x,
        y,
        t: location - (x * base.x + y * base.y),
    }
}

impl Expansion<'_, '_> {
    /// Expands `ins` (on `layer`, with `handle`) under `outer` (the maps of the INSERTs it sits
    /// in), `stack` the names of the blocks being expanded.
    pub(super) fn insert(
        &mut self,
        ins: &dxf::entities::Insert,
        layer: &str,
        handle: &str,
        outer: Affine,
        stack: &mut Vec<String>,
    ) -> Result<(), ReadError> {
        let ctx = self.ctx;
        let values = [
            ins.location.x,
            ins.location.y,
            ins.x_scale_factor,
            ins.y_scale_factor,
            ins.rotation,
            ins.column_spacing,
            ins.row_spacing,
        ];
        ctx.finite(&values)?;
        let mirrored = ctx.mirrored(&ins.extrusion_direction)?;
        let key = ins.name.to_lowercase();
        let Some(block) = self.blocks.by_name.get(&key).copied() else {
            return Err(ctx.bad(format!(
                "it inserts block \"{}\", which the drawing does not define; the file is \
                 incomplete: save it again from the CAD program",
                ins.name
            )));
        };
        if stack.contains(&key) {
            return Err(ctx.bad(format!(
                "block \"{}\" inserts itself (through {}); such a drawing has no end",
                ins.name,
                stack.join(" → ")
            )));
        }
        if stack.len() >= MAX_NESTING {
            return Err(ctx.bad(format!(
                "its blocks are nested more than {MAX_NESTING} deep ({}); explode some in the \
                 CAD program",
                stack.join(" → ")
            )));
        }
        if ins.x_scale_factor == 0.0 || ins.y_scale_factor == 0.0 {
            return Err(ctx.bad(format!(
                "it inserts block \"{}\" at scale 0 ({} × {}), which flattens it",
                ins.name, ins.x_scale_factor, ins.y_scale_factor
            )));
        }
        let mirror = if mirrored {
            Affine {
                x: Vec2::new(-1.0, 0.0),
                ..Affine::IDENTITY
            }
        } else {
            Affine::IDENTITY
        };
        let (columns, rows) = (ins.column_count.max(1), ins.row_count.max(1));
        stack.push(key);
        for j in 0..rows {
            for i in 0..columns {
                let cell = cell_map(ins, &block.base_point, i as f64, j as f64);
                let map = outer.after(&mirror.after(&cell));
                for e in &block.entities {
                    self.entity(e, layer, handle, map, &ins.name, stack)?;
                }
            }
        }
        stack.pop();
        Ok(())
    }

    /// One entity of a block, placed by `map`.
    fn entity(
        &mut self,
        e: &dxf::entities::Entity,
        insert_layer: &str,
        insert_handle: &str,
        map: Affine,
        block: &str,
        stack: &mut Vec<String>,
    ) -> Result<(), ReadError> {
        let layer = if e.common.layer == "0" {
            insert_layer.to_string()
        } else {
            e.common.layer.clone()
        };
        let handle = format!("{insert_handle}/{}", e.common.handle.as_string());
        let what = format!(
            "{} of block \"{block}\" on layer {layer} (handle {handle}, inserted at line {})",
            entity_type(&e.specific),
            self.line
        );
        let ctx = Ctx {
            file: self.ctx.file,
            what,
            scale: 1.0,
        };
        if let dxf::entities::EntityType::Insert(inner) = &e.specific {
            let mut nested = Expansion {
                blocks: self.blocks,
                ctx: &ctx,
                line: self.line,
                out: self.out,
                notes: self.notes,
            };
            return nested.insert(inner, &layer, &handle, map, stack);
        }
        // Converted in block units (scale 1); the map takes them to the drawing's mm.
        match convert(&e.specific, &ctx)? {
            Converted::Kind(kind) => {
                let placed = place(&kind, &map).map_err(|reason| ctx.bad(reason))?;
                self.out.push(Entity {
                    layer,
                    handle,
                    line: self.line,
                    kind: placed,
                });
            }
            Converted::Degenerate(why) => self.notes.add(
                &format!("{} ({why}) in block {block}", entity_type(&e.specific)),
                &layer,
                &label(&handle, self.line),
            ),
            Converted::Unsupported => self.notes.add(
                &format!("{} in block {block}", entity_type(&e.specific)),
                &layer,
                &label(&handle, self.line),
            ),
        }
        Ok(())
    }
}

/// The DXF type name of an entity, for messages.
fn entity_type(e: &dxf::entities::EntityType) -> &'static str {
    use dxf::entities::EntityType as T;
    match e {
        T::Line(_) => "LINE",
        T::Arc(_) => "ARC",
        T::Circle(_) => "CIRCLE",
        T::LwPolyline(_) => "LWPOLYLINE",
        T::Polyline(_) => "POLYLINE",
        T::Ellipse(_) => "ELLIPSE",
        T::ModelPoint(_) => "POINT",
        T::Insert(_) => "INSERT",
        T::Spline(_) => "SPLINE",
        T::Text(_) => "TEXT",
        T::MText(_) => "MTEXT",
        T::Attribute(_) => "ATTRIB",
        T::AttributeDefinition(_) => "ATTDEF",
        T::Solid(_) => "SOLID",
        T::Leader(_) => "LEADER",
        _ => "entity",
    }
}

/// An entity's geometry placed by `map` (see the module docs).
pub(super) fn place(kind: &EntityKind, map: &Affine) -> Result<EntityKind, String> {
    let similar = map.similarity_scale();
    let flip = map.det() < 0.0;
    Ok(match kind {
        EntityKind::Line(s) => EntityKind::Line(crate::geom::Segment::new(
            map.point(s.start),
            map.point(s.end),
        )),
        EntityKind::Point(p) => EntityKind::Point(map.point(*p)),
        EntityKind::Circle { centre, radius } => match similar {
            Some(s) => EntityKind::Circle {
                centre: map.point(*centre),
                radius: radius * s,
            },
            None => EntityKind::Ellipse {
                ellipse: conjugate_image(
                    map,
                    *centre,
                    Vec2::new(*radius, 0.0),
                    Vec2::new(0.0, *radius),
                )?,
                start: 0.0,
                end: TAU,
            },
        },
        EntityKind::Arc(a) => match similar {
            Some(s) => {
                let centre = map.point(a.centre);
                let start = map.point(a.start_point()) - centre;
                EntityKind::Arc(ArcSegment {
                    centre,
                    radius: a.radius * s,
                    start_angle: start.y.atan2(start.x),
                    sweep: if flip { -a.sweep } else { a.sweep },
                })
            }
            None => {
                let ellipse = conjugate_image(
                    map,
                    a.centre,
                    Vec2::new(a.radius, 0.0),
                    Vec2::new(0.0, a.radius),
                )?;
                partial(&ellipse, map, a.start_point(), a.end_point(), a.sweep < 0.0)
            }
        },
        EntityKind::Ellipse {
            ellipse,
            start,
            end,
        } => {
            let (s, c) = ellipse.angle().sin_cos();
            let major = Vec2::new(c, s) * ellipse.a();
            let minor = Vec2::new(-s, c) * ellipse.b();
            let image = conjugate_image(map, ellipse.centre(), major, minor)?;
            if kind.is_full_ellipse() {
                EntityKind::Ellipse {
                    ellipse: image,
                    start: 0.0,
                    end: TAU,
                }
            } else {
                partial(
                    &image,
                    map,
                    ellipse.point(*start),
                    ellipse.point(*end),
                    false,
                )
            }
        }
        EntityKind::Polyline { vertices, closed } => {
            if similar.is_none() && vertices.iter().any(|(_, bulge)| *bulge != 0.0) {
                return Err(
                    "the block is inserted at unequal X and Y scales and this polyline has arcs, \
                     which would become pieces of ellipses inside a contour; conicut cannot cut \
                     those. Insert the block at equal scales, or explode it and draw the shape \
                     again"
                        .into(),
                );
            }
            EntityKind::Polyline {
                vertices: vertices
                    .iter()
                    .map(|&(p, bulge)| (map.point(p), if flip { -bulge } else { bulge }))
                    .collect(),
                closed: *closed,
            }
        }
    })
}

/// The ellipse `centre + u cos t + v sin t` (any conjugate semi-diameters) placed by `map`.
fn conjugate_image(map: &Affine, centre: Point, u: Vec2, v: Vec2) -> Result<Ellipse, String> {
    let (u, v) = (map.vector(u), map.vector(v));
    let (sxx, sxy, syy) = (
        u.x * u.x + v.x * v.x,
        u.x * u.y + v.x * v.y,
        u.y * u.y + v.y * v.y,
    );
    Ellipse::from_shape_matrix(map.point(centre), sxx, sxy, syy)
        .map_err(|_| "the block's scales flatten it to a line".to_string())
}

/// The part of `image` from the image of `from` to the image of `to`, counter-clockwise; the
/// source ran clockwise when `clockwise`, and a mirroring map turns the sense once more.
fn partial(image: &Ellipse, map: &Affine, from: Point, to: Point, clockwise: bool) -> EntityKind {
    let anomaly = |p: Point| {
        let (s, c) = image.angle().sin_cos();
        let d = map.point(p) - image.centre();
        let (x, y) = (d.x * c + d.y * s, -d.x * s + d.y * c);
        (y / image.b()).atan2(x / image.a()).rem_euclid(TAU)
    };
    let (mut a, mut b) = (anomaly(from), anomaly(to));
    if clockwise != (map.det() < 0.0) {
        std::mem::swap(&mut a, &mut b);
    }
    let mut end = b;
    if end <= a {
        end += TAU;
    }
    EntityKind::Ellipse {
        ellipse: *image,
        start: a,
        end,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn turned_scaled(deg: f64, sx: f64, sy: f64, t: Vec2) -> Affine {
        let (s, c) = deg.to_radians().sin_cos();
        Affine {
            x: Vec2::new(c, s) * sx,
            y: Vec2::new(-s, c) * sy,
            t,
        }
    }

    #[test]
    fn a_circle_under_unequal_scale_is_the_ellipse_of_those_semi_axes() {
        // A circle of radius 2 scaled 3 × 1 and turned 30°: semi-axes 6 and 2 at 30°.
        let map = turned_scaled(30.0, 3.0, 1.0, Vec2::new(10.0, -4.0));
        let kind = EntityKind::Circle {
            centre: Point::new(1.0, 1.0),
            radius: 2.0,
        };
        let EntityKind::Ellipse {
            ellipse,
            start,
            end,
        } = place(&kind, &map).unwrap()
        else {
            panic!("an ellipse")
        };
        assert!((ellipse.a() - 6.0).abs() < 1e-12 && (ellipse.b() - 2.0).abs() < 1e-12);
        assert!((ellipse.angle() - 30f64.to_radians()).abs() < 1e-12);
        assert!(ellipse.centre().distance(map.point(Point::new(1.0, 1.0))) < 1e-12);
        assert_eq!((start, end), (0.0, TAU));
    }

    #[test]
    fn arcs_keep_their_ends_under_every_map() {
        let arc = ArcSegment {
            centre: Point::new(2.0, 3.0),
            radius: 4.0,
            start_angle: 0.3,
            sweep: 2.0,
        };
        for map in [
            turned_scaled(40.0, 2.0, 2.0, Vec2::new(5.0, 1.0)),
            turned_scaled(40.0, -2.0, 2.0, Vec2::new(5.0, 1.0)),
            turned_scaled(-70.0, 3.0, 0.5, Vec2::new(-8.0, 2.0)),
            turned_scaled(15.0, -1.5, 4.0, Vec2::new(0.0, 0.0)),
        ] {
            let (p, q) = (map.point(arc.start_point()), map.point(arc.end_point()));
            let mid = map.point(arc.point_at(0.5));
            match place(&EntityKind::Arc(arc), &map).unwrap() {
                EntityKind::Arc(a) => {
                    assert!(a.start_point().distance(p) < 1e-12);
                    assert!(a.end_point().distance(q) < 1e-12);
                    assert!(a.point_at(0.5).distance(mid) < 1e-12);
                }
                EntityKind::Ellipse {
                    ellipse,
                    start,
                    end,
                } => {
                    // Counter-clockwise from start to end: the ends are the images' two ends
                    // in some order, and the middle is on the stretch between them.
                    let (a, b) = (ellipse.point(start), ellipse.point(end));
                    let ends_match = (a.distance(p) < 1e-9 && b.distance(q) < 1e-9)
                        || (a.distance(q) < 1e-9 && b.distance(p) < 1e-9);
                    assert!(ends_match, "{a:?} {b:?} vs {p:?} {q:?}");
                    let on_stretch = (0..=400).any(|k| {
                        let t = start + (end - start) * k as f64 / 400.0;
                        ellipse.point(t).distance(mid) < 0.05
                    });
                    assert!(on_stretch);
                }
                other => panic!("{other:?}"),
            }
        }
    }

    #[test]
    fn polyline_arcs_flip_under_a_mirror_and_are_refused_under_unequal_scale() {
        let poly = EntityKind::Polyline {
            vertices: vec![(Point::new(0.0, 0.0), 1.0), (Point::new(2.0, 0.0), 0.0)],
            closed: false,
        };
        let mirror = turned_scaled(0.0, -1.0, 1.0, Vec2::new(0.0, 0.0));
        let EntityKind::Polyline { vertices, .. } = place(&poly, &mirror).unwrap() else {
            panic!()
        };
        assert_eq!(vertices[0].1, -1.0);
        assert!(place(&poly, &turned_scaled(0.0, 2.0, 1.0, Vec2::new(0.0, 0.0))).is_err());
    }
}
