//! Converting one loaded entity: LINE, ARC, CIRCLE, LWPOLYLINE, POLYLINE, ELLIPSE, SPLINE (as a
//! polyline of arcs, [`super::spline`]) and POINT into
//! an [`EntityKind`] in millimetres and WCS (OCS mirrored, see [`super::ocs`]).

use super::ocs::{Ctx, EXTRUSION_TILT_LIMIT};
use super::{EntityKind, ReadError};
use crate::geom::{ArcSegment, Ellipse, Point, Segment, Vec2};
use dxf::entities::{self as de, EntityType};
use std::f64::consts::{PI, TAU};

/// Largest z difference (drawing units) between points of one LINE or 3-D POLYLINE.
pub const FLAT_Z_LIMIT: f64 = 1e-6;

/// An ELLIPSE whose end parameter is within this many radians of its start (modulo 2π) is a
/// full ellipse.
pub const FULL_ELLIPSE_SLACK: f64 = 1e-9;

/// An ARC whose end angle is a non-zero multiple of 360° from its start, within this many
/// degrees, is a full circle.
pub const FULL_ARC_SLACK_DEG: f64 = 1e-9;

pub(super) enum Converted {
    Kind(EntityKind),
    /// Skipped as degenerate, with the reason for the note.
    Degenerate(&'static str),
    Unsupported,
}

/// One loaded entity in millimetres and WCS, skipped as degenerate, or not a type conicut reads.
pub(super) fn convert(e: &EntityType, ctx: &Ctx) -> Result<Converted, ReadError> {
    match e {
        EntityType::Line(l) => line(l, ctx),
        EntityType::Circle(c) => circle(c, ctx),
        EntityType::Arc(a) => arc(a, ctx),
        EntityType::LwPolyline(p) => lwpolyline(p, ctx),
        EntityType::Polyline(p) => dxf_polyline(p, ctx),
        EntityType::Ellipse(el) => ellipse(el, ctx),
        EntityType::Spline(sp) => super::spline::spline(sp, ctx),
        EntityType::ModelPoint(p) => {
            ctx.finite(&[p.location.x, p.location.y])?;
            Ok(Converted::Kind(EntityKind::Point(ctx.wcs(&p.location))))
        }
        _ => Ok(Converted::Unsupported),
    }
}

fn line(l: &de::Line, ctx: &Ctx) -> Result<Converted, ReadError> {
    ctx.finite(&[l.p1.x, l.p1.y, l.p1.z, l.p2.x, l.p2.y, l.p2.z])?;
    if (l.p1.z - l.p2.z).abs() > FLAT_Z_LIMIT {
        return Err(ctx.bad(format!(
            "its ends are at different heights (z = {} and {}), so it does not lie in \
             the XY plane; flatten the drawing in the CAD program",
            l.p1.z, l.p2.z
        )));
    }
    let (p, q) = (ctx.wcs(&l.p1), ctx.wcs(&l.p2));
    if p == q {
        return Ok(Converted::Degenerate("zero length"));
    }
    Ok(Converted::Kind(EntityKind::Line(Segment::new(p, q))))
}

/// Refuses a negative radius; `Some` for a zero radius (degenerate).
fn check_radius(radius: f64, ctx: &Ctx) -> Result<Option<Converted>, ReadError> {
    if radius < 0.0 {
        return Err(ctx.bad(format!(
            "its radius is negative ({radius}); correct it in the CAD program"
        )));
    }
    if radius == 0.0 {
        return Ok(Some(Converted::Degenerate("zero radius")));
    }
    Ok(None)
}

fn circle(c: &de::Circle, ctx: &Ctx) -> Result<Converted, ReadError> {
    ctx.finite(&[c.center.x, c.center.y, c.radius])?;
    let m = ctx.mirrored(&c.normal)?;
    if let Some(degenerate) = check_radius(c.radius, ctx)? {
        return Ok(degenerate);
    }
    Ok(Converted::Kind(EntityKind::Circle {
        centre: ctx.ocs(c.center.x, c.center.y, m),
        radius: c.radius * ctx.scale,
    }))
}

fn arc(a: &de::Arc, ctx: &Ctx) -> Result<Converted, ReadError> {
    ctx.finite(&[a.center.x, a.center.y, a.radius, a.start_angle, a.end_angle])?;
    let m = ctx.mirrored(&a.normal)?;
    if let Some(degenerate) = check_radius(a.radius, ctx)? {
        return Ok(degenerate);
    }
    let centre = ctx.ocs(a.center.x, a.center.y, m);
    let radius = a.radius * ctx.scale;
    let diff = a.end_angle - a.start_angle;
    let sweep_deg = diff.rem_euclid(360.0);
    if sweep_deg <= FULL_ARC_SLACK_DEG || 360.0 - sweep_deg <= FULL_ARC_SLACK_DEG {
        if diff.abs() <= FULL_ARC_SLACK_DEG {
            return Err(ctx.bad(format!(
                "its start and end angles are equal ({}°), so it has no length; delete \
                 it, or draw a CIRCLE if a full circle is meant",
                a.start_angle
            )));
        }
        return Ok(Converted::Kind(EntityKind::Circle { centre, radius }));
    }
    // DXF angles are degrees, counter-clockwise about the extrusion direction.
    let start = a.start_angle.to_radians();
    let sweep = sweep_deg.to_radians();
    let arc = if m {
        ArcSegment {
            centre,
            radius,
            start_angle: PI - start,
            sweep: -sweep,
        }
    } else {
        ArcSegment {
            centre,
            radius,
            start_angle: start,
            sweep,
        }
    };
    Ok(Converted::Kind(EntityKind::Arc(arc)))
}

fn lwpolyline(p: &de::LwPolyline, ctx: &Ctx) -> Result<Converted, ReadError> {
    let m = ctx.mirrored(&p.extrusion_direction)?;
    let mut vertices = Vec::with_capacity(p.vertices.len());
    for v in &p.vertices {
        ctx.finite(&[v.x, v.y, v.bulge])?;
        let bulge = if m { -v.bulge } else { v.bulge };
        vertices.push((ctx.ocs(v.x, v.y, m), bulge));
    }
    polyline(vertices, p.is_closed())
}

/// A POLYLINE (2-D in its OCS, or a flat 3-D one); meshes are not read.
fn dxf_polyline(p: &de::Polyline, ctx: &Ctx) -> Result<Converted, ReadError> {
    if p.is_polyface_mesh() || p.is_3d_polygon_mesh() {
        return Ok(Converted::Unsupported);
    }
    let three_d = p.is_3d_polyline();
    let m = if three_d {
        false
    } else {
        ctx.mirrored(&p.normal)?
    };
    let mut vertices = Vec::new();
    let mut z_range = (f64::INFINITY, f64::NEG_INFINITY);
    for v in p.vertices() {
        if v.is_spline_frame_control_point() {
            continue;
        }
        let l = &v.location;
        ctx.finite(&[l.x, l.y, l.z, v.bulge])?;
        z_range = (z_range.0.min(l.z), z_range.1.max(l.z));
        if three_d {
            vertices.push((ctx.wcs(l), 0.0));
        } else {
            let bulge = if m { -v.bulge } else { v.bulge };
            vertices.push((ctx.ocs(l.x, l.y, m), bulge));
        }
    }
    if three_d && z_range.1 - z_range.0 > FLAT_Z_LIMIT {
        return Err(ctx.bad(format!(
            "it is a 3-D polyline whose z runs from {} to {}, so it does not lie in the \
             XY plane; flatten the drawing in the CAD program",
            z_range.0, z_range.1
        )));
    }
    polyline(vertices, p.is_closed())
}

fn polyline(vertices: Vec<(Point, f64)>, closed: bool) -> Result<Converted, ReadError> {
    if vertices.len() < 2 {
        return Ok(Converted::Degenerate("fewer than 2 vertices"));
    }
    Ok(Converted::Kind(EntityKind::Polyline { vertices, closed }))
}

fn ellipse(el: &dxf::entities::Ellipse, ctx: &Ctx) -> Result<Converted, ReadError> {
    let (c, mj) = (&el.center, &el.major_axis);
    ctx.finite(&[
        c.x,
        c.y,
        mj.x,
        mj.y,
        mj.z,
        el.minor_axis_ratio,
        el.start_parameter,
        el.end_parameter,
    ])?;
    let mirrored = ctx.mirrored(&el.normal)?;
    let major_len = (mj.x * mj.x + mj.y * mj.y + mj.z * mj.z).sqrt();
    if major_len == 0.0 {
        return Err(ctx
            .bad("its major axis has zero length; delete it or draw it again in the CAD program"));
    }
    if mj.z.abs() > EXTRUSION_TILT_LIMIT * major_len {
        return Err(
            ctx.bad("its major axis leaves the XY plane; flatten the drawing in the CAD program")
        );
    }
    if el.minor_axis_ratio <= 0.0 {
        return Err(ctx.bad(format!(
            "its minor-to-major axis ratio is {} (it must be above 0); draw it again in the CAD \
             program",
            el.minor_axis_ratio
        )));
    }
    let centre = ctx.wcs(c);
    let u = Vec2::new(mj.x, mj.y) * ctx.scale;
    let a = u.length();
    let b = el.minor_axis_ratio * a;
    let phi = u.angle();
    let e = Ellipse::new(centre, a, b, phi).map_err(|err| ctx.bad(err.to_string()))?;

    let diff = el.end_parameter - el.start_parameter;
    let sweep = diff.rem_euclid(TAU);
    if sweep <= FULL_ELLIPSE_SLACK || TAU - sweep <= FULL_ELLIPSE_SLACK {
        return Ok(Converted::Kind(EntityKind::Ellipse {
            ellipse: e,
            start: 0.0,
            end: TAU,
        }));
    }
    // The DXF point at parameter t: C + M cos t + r (N × M) sin t (DXF reference, ELLIPSE);
    // N × M is M turned a quarter turn counter-clockwise for N = +Z, clockwise for N = −Z.
    let minor_dir = if mirrored { -u.perp() } else { u.perp() } * el.minor_axis_ratio;
    let dxf_point = |t: f64| centre + u * t.cos() + minor_dir * t.sin();
    // The eccentric anomaly of a point of `e` in `e`'s own frame.
    let anomaly = |p: Point| {
        let q = (p - e.centre()).rotated(-e.angle());
        let t = (q.y / e.b()).atan2(q.x / e.a()).rem_euclid(TAU);
        // rem_euclid can round a tiny negative angle up to exactly 2π.
        if t >= TAU { 0.0 } else { t }
    };
    // For N = −Z the DXF curve runs clockwise seen from +Z, so the same piece of curve runs
    // counter-clockwise from the DXF end to the DXF start.
    let from = if mirrored {
        el.end_parameter
    } else {
        el.start_parameter
    };
    let start = anomaly(dxf_point(from));
    Ok(Converted::Kind(EntityKind::Ellipse {
        ellipse: e,
        start,
        end: start + sweep,
    }))
}
