//! Stage 1, read: turns the bytes of an ASCII DXF file into plane entities in millimetres, in
//! world coordinates (WCS), with the layer, handle and line each came from.
//!
//! # What is read
//!
//! LINE, ARC, CIRCLE, LWPOLYLINE, POLYLINE (2-D and flat 3-D; bulges kept; spline frame
//! control points skipped; meshes noted and skipped), ELLIPSE and POINT, in model space.
//! Everything else (TEXT, INSERT, SPLINE, HATCH, DIMENSION, …) and paper-space entities are
//! listed in [`Drawing::notes`] with their type, layer and handles, never dropped silently.
//! Zero-length LINEs and zero-radius ARCs and CIRCLEs are degenerate leftovers of editing: they are
//! skipped with a note (they enclose nothing and join nothing).
//!
//! # Units
//!
//! Coordinates are converted to millimetres here and nowhere else. The drawing's unit comes
//! from `$INSUNITS` (1 inch, 2 foot, 4 mm, 5 cm, 6 m; see [`Units`]); when the header has none
//! (0 or missing, as in most R12 files) the caller must say which unit with
//! [`ReadOptions::units`]; when both are given and disagree, the file is refused. Nothing is
//! guessed. DXF angles: ARC angles are degrees, ELLIPSE parameters radians; both come out in
//! radians.
//!
//! # Object coordinate systems
//!
//! ARC, CIRCLE, LWPOLYLINE and 2-D POLYLINE store points in the entity's object coordinate
//! system (OCS), set by its extrusion direction N. Only N = ±Z is accepted: a unit normal whose
//! x and y components are both at most [`EXTRUSION_TOLERANCE`] in size. For N = (0, 0, −1) the
//! Arbitrary Axis Algorithm (DXF reference) gives the OCS axes Ax = (−1, 0, 0), Ay = (0, 1, 0),
//! so an OCS point (x, y) is the WCS point (−x, y); an arc that runs counter-clockwise about N
//! runs clockwise seen from +Z, so its WCS start angle is π − start and its sweep changes sign;
//! bulges change sign (docs/sources.md P2.3). LINE, ELLIPSE and POINT store WCS points;
//! an ELLIPSE with N = −Z has its minor axis along N × M = −(Z × M), so its parameter runs
//! clockwise seen from +Z. Any other N is refused, naming the entity. Elevations (z) are
//! dropped; a LINE or 3-D POLYLINE whose z varies by more than [`Z_TOLERANCE`] drawing units
//! is refused (it does not lie in a plane parallel to XY).
//!
//! # Trusting the DXF library
//!
//! The `dxf` crate can drop an entity holding a value it cannot parse and still return `Ok`.
//! [`read_dxf`] therefore reads the text a second time itself: it checks that every numeric
//! value in the ENTITIES section is a finite number (naming the line when not), and matches the
//! entity records it finds one by one with what the crate loaded, refusing the file when one
//! went missing.

pub mod points;
mod raw;
mod units;

pub use points::{PointsError, PointsProblem, parse_points_csv};
pub use units::{Units, UnitsSource, UnknownUnits};

use crate::geom::{ArcSegment, Ellipse, Point, Segment, Vec2};
use dxf::entities::EntityType;
use raw::RawRecord;
use serde::Serialize;
use std::f64::consts::{PI, TAU};

/// Largest |x| or |y| of a unit extrusion vector still taken as ±Z.
pub const EXTRUSION_TOLERANCE: f64 = 1e-9;

/// Largest z difference (drawing units) between points of one LINE or 3-D POLYLINE.
pub const Z_TOLERANCE: f64 = 1e-6;

/// An ELLIPSE whose end parameter is within this many radians of its start (modulo 2π) is a
/// full ellipse.
pub const FULL_ELLIPSE_TOLERANCE: f64 = 1e-9;

/// An ARC whose end angle is a non-zero multiple of 360° from its start, within this many
/// degrees, is a full circle.
pub const FULL_ARC_TOLERANCE_DEG: f64 = 1e-9;

/// What the caller knows about the file beyond its bytes.
#[derive(Debug, Clone, Copy)]
pub struct ReadOptions<'a> {
    /// The file's name, for messages.
    pub file_name: &'a str,
    /// The unit the user says the drawing is in (the `--units` flag), if any.
    pub units: Option<Units>,
}

/// The drawing's usable entities, in millimetres and WCS.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Drawing {
    pub entities: Vec<Entity>,
    /// The unit the file's coordinates were in (they have been converted to mm).
    pub units: Units,
    pub units_from: UnitsSource,
    /// Things read but not used (unsupported entities, paper space, degenerate pieces), one line
    /// each, for the user.
    pub notes: Vec<String>,
}

/// One entity of the drawing.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Entity {
    /// The DXF layer name as written in the file (layer names compare case-insensitively).
    pub layer: String,
    /// The DXF handle (group code 5, hexadecimal) as written in the file; for a file that gives
    /// the entity no handle (handles are optional in R12), `L` followed by the line number.
    pub handle: String,
    /// The 1-based line of the file where the entity's record starts.
    pub line: usize,
    pub kind: EntityKind,
}

/// An entity's geometry, in millimetres, WCS, radians.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum EntityKind {
    Line(Segment),
    /// A circular arc that is not a full circle.
    Arc(ArcSegment),
    Circle {
        center: Point,
        radius: f64,
    },
    /// An LWPOLYLINE or POLYLINE: each vertex with the bulge of the piece that starts there
    /// (for an open polyline the last vertex's bulge is unused).
    Polyline {
        vertices: Vec<(Point, f64)>,
        closed: bool,
    },
    /// An ELLIPSE. `start` and `end` are eccentric anomalies of `ellipse` itself (as normalised
    /// by [`Ellipse::new`], so `a ≥ b`), with `0 ≤ start < 2π` and `start < end ≤ start + 2π`;
    /// the curve runs counter-clockwise from `start` to `end`. A full ellipse is exactly
    /// `0..2π`.
    Ellipse {
        ellipse: Ellipse,
        start: f64,
        end: f64,
    },
    Point(Point),
}

impl EntityKind {
    /// The DXF entity type this came from, for messages (`POLYLINE` covers LWPOLYLINE too).
    pub fn type_name(&self) -> &'static str {
        match self {
            EntityKind::Line(_) => "LINE",
            EntityKind::Arc(_) => "ARC",
            EntityKind::Circle { .. } => "CIRCLE",
            EntityKind::Polyline { .. } => "POLYLINE",
            EntityKind::Ellipse { .. } => "ELLIPSE",
            EntityKind::Point(_) => "POINT",
        }
    }
}

impl EntityKind {
    /// Whether this is an ELLIPSE covering the whole curve.
    pub fn is_full_ellipse(&self) -> bool {
        matches!(self, EntityKind::Ellipse { start, end, .. } if *start == 0.0 && *end == TAU)
    }
}

impl Entity {
    /// "LINE on layer CUT (handle 2A, line 120)", for messages.
    pub fn describe(&self) -> String {
        describe(self.kind.type_name(), &self.layer, &self.handle, self.line)
    }
}

fn describe(kind: &str, layer: &str, handle: &str, line: usize) -> String {
    if handle.starts_with('L') {
        format!("{kind} on layer {layer} (no handle, line {line})")
    } else {
        format!("{kind} on layer {layer} (handle {handle}, line {line})")
    }
}

/// Why a file could not be read. Every message names the file and says what to do.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ReadError {
    #[error(
        "{file}: this is a binary DXF (or DXB) file; conicut reads ASCII DXF only. Save the \
         drawing again as an ASCII (text) DXF, version R12 or 2000 or later"
    )]
    Binary { file: String },
    #[error(
        "{file}: this does not look like an ASCII DXF drawing ({reason}). Check that it is the \
         right file, exported from the CAD program as ASCII DXF"
    )]
    NotDxf { file: String, reason: String },
    #[error("{file}{}: the DXF could not be read: {message}. Look at the file near that place, or export it again from the CAD program", line.map(|l| format!(", line {l}")).unwrap_or_default())]
    Load {
        file: String,
        /// The line (for text files) the DXF library points at.
        line: Option<usize>,
        message: String,
    },
    #[error(
        "{file}, line {line}: group code {code} of {what} should hold a finite number but holds \
         '{value}'. Correct the value in the CAD program and export again"
    )]
    BadNumber {
        file: String,
        line: usize,
        code: i32,
        value: String,
        what: String,
    },
    #[error(
        "{file}, line {line}: the DXF library did not load {what} (or lost some of its \
         vertices), although the file holds it: some value in it could not be read. Check that \
         entity in the file, or export the drawing again (ASCII DXF, R12 or 2000 or later)"
    )]
    EntityLost {
        file: String,
        line: usize,
        what: String,
    },
    #[error(
        "{file}: the DXF library loaded {loaded} entities but the ENTITIES section holds \
         {counted}; the file's structure is unusual and something may be lost. Export the \
         drawing again from the CAD program"
    )]
    CountMismatch {
        file: String,
        loaded: usize,
        counted: usize,
    },
    #[error(
        "{file}: the drawing does not say what units it is in ($INSUNITS is 0 or missing). Pass \
         --units mm or --units in to say which"
    )]
    NoUnits { file: String },
    #[error(
        "{file}: the drawing's header says its units are {header} ($INSUNITS) but --units says \
         {flag}. Find out which is right: drop --units to use the header's unit, or correct \
         $INSUNITS (the drawing units) in the CAD program"
    )]
    UnitsDisagree {
        file: String,
        header: Units,
        flag: Units,
    },
    #[error(
        "{file}: the drawing's header gives its units as {name} ($INSUNITS = {code}); conicut \
         reads drawings in mm, cm, m, in or ft. Rescale the drawing to millimetres or inches in \
         the CAD program"
    )]
    UnsupportedUnits {
        file: String,
        code: i64,
        name: String,
    },
    #[error(
        "{file}: {what} has extrusion direction ({}, {}, {}), which is not ±Z, so it does not \
         lie in the XY plane. conicut reads flat drawings: rotate the entity into the XY plane \
         (or flatten the drawing) and export again", normal[0], normal[1], normal[2]
    )]
    NotFlat {
        file: String,
        what: String,
        normal: [f64; 3],
    },
    #[error("{file}: {what}: {reason}")]
    BadGeometry {
        file: String,
        what: String,
        reason: String,
    },
}

/// Reads an ASCII DXF file's bytes. See the module documentation for what is read and how.
pub fn read_dxf(bytes: &[u8], opts: &ReadOptions) -> Result<Drawing, ReadError> {
    let file = opts.file_name.to_string();
    if bytes.starts_with(b"AutoCAD Binary DXF") || bytes.starts_with(b"AutoCAD DXB") {
        return Err(ReadError::Binary { file });
    }
    if bytes.contains(&0) {
        return Err(ReadError::NotDxf {
            file,
            reason: "it holds NUL bytes, so it is not text".into(),
        });
    }

    let text = String::from_utf8_lossy(bytes);
    let scan = raw::scan(&text).map_err(|b| {
        let what = match &b.record {
            Some(r) => describe_raw(r),
            None => "an entity".to_string(),
        };
        ReadError::BadNumber {
            file: file.clone(),
            line: b.line,
            code: b.code,
            value: b.value,
            what,
        }
    })?;
    if !scan.has_entities_section {
        return Err(ReadError::NotDxf {
            file,
            reason: "it has no ENTITIES section".into(),
        });
    }

    let loaded = dxf::Drawing::load(&mut &bytes[..]).map_err(|e| ReadError::Load {
        file: file.clone(),
        line: dxf_error_line(&e),
        message: e.to_string(),
    })?;

    let (units, units_from) = resolve_units(&file, scan.insunits, opts.units)?;
    let scale = units.mm_per_unit();

    let mut entities = Vec::new();
    let mut notes = Notes::default();
    let loaded_entities: Vec<&dxf::entities::Entity> = loaded.entities().collect();
    let mut next = 0;
    for rec in &scan.records {
        let kind = if rec.kind == "3DLINE" {
            "LINE"
        } else {
            rec.kind.as_str()
        };
        let candidate = loaded_entities.get(next).copied();
        let matched = match (kind, candidate) {
            ("DIMENSION", Some(e)) if loaded_type_name(&e.specific) == "DIMENSION" => Some(e),
            // The crate drops dimensions of a kind it does not know; they are only notes to us.
            ("DIMENSION", _) => None,
            (k, Some(e)) if CRATE_KNOWN.contains(&k) && loaded_type_name(&e.specific) == k => {
                Some(e)
            }
            (k, _) if CRATE_KNOWN.contains(&k) => {
                return Err(ReadError::EntityLost {
                    file,
                    line: rec.line,
                    what: describe_raw(rec),
                });
            }
            _ => None,
        };
        let Some(ent) = matched else {
            notes.add(
                &rec.kind,
                rec.layer.as_deref().unwrap_or("0"),
                &label_raw(rec),
            );
            continue;
        };
        next += 1;
        let handle = rec
            .handle
            .clone()
            .unwrap_or_else(|| format!("L{}", rec.line));
        let layer = ent.common.layer.clone();
        let ctx = Ctx {
            file: &file,
            what: describe(kind, &layer, &handle, rec.line),
            scale,
        };
        if let EntityType::Polyline(p) = &ent.specific
            && p.vertices().count() != rec.vertices
        {
            return Err(ReadError::EntityLost {
                file: file.clone(),
                line: rec.line,
                what: ctx.what,
            });
        }
        if ent.common.is_in_paper_space {
            notes.add(
                &format!("{} (paper space)", rec.kind),
                &layer,
                &label(&handle, rec.line),
            );
            continue;
        }
        match convert(&ent.specific, &ctx)? {
            Converted::Kind(kind) => entities.push(Entity {
                layer,
                handle,
                line: rec.line,
                kind,
            }),
            Converted::Degenerate(why) => notes.add(
                &format!("{} ({why})", rec.kind),
                &layer,
                &label(&handle, rec.line),
            ),
            Converted::Unsupported => notes.add(&rec.kind, &layer, &label(&handle, rec.line)),
        }
    }
    if next != loaded_entities.len() {
        return Err(ReadError::CountMismatch {
            file,
            loaded: loaded_entities.len(),
            counted: next,
        });
    }

    Ok(Drawing {
        entities,
        units,
        units_from,
        notes: notes.finish(),
    })
}

fn resolve_units(
    file: &str,
    insunits: Option<i64>,
    flag: Option<Units>,
) -> Result<(Units, UnitsSource), ReadError> {
    let header = match Units::from_insunits(insunits.unwrap_or(0)) {
        Ok(u) => u,
        Err(name) => {
            return Err(ReadError::UnsupportedUnits {
                file: file.to_string(),
                code: insunits.unwrap_or(0),
                name: name.to_string(),
            });
        }
    };
    match (header, flag) {
        (Some(h), Some(f)) if h != f => Err(ReadError::UnitsDisagree {
            file: file.to_string(),
            header: h,
            flag: f,
        }),
        (Some(h), _) => Ok((h, UnitsSource::Header)),
        (None, Some(f)) => Ok((f, UnitsSource::UserFlag)),
        (None, None) => Err(ReadError::NoUnits {
            file: file.to_string(),
        }),
    }
}

/// The line a `dxf` crate error points at (its "line/offset"; a line number for text files).
fn dxf_error_line(e: &dxf::DxfError) -> Option<usize> {
    use dxf::DxfError as E;
    match e {
        E::ParseFloatError(_, o)
        | E::ParseIntError(_, o)
        | E::ParseError(o)
        | E::UnexpectedCode(_, o)
        | E::UnexpectedByte(_, o)
        | E::UnexpectedEnumValue(o)
        | E::ExpectedTableType(o)
        | E::WrongValueType(o) => Some(*o),
        E::UnexpectedCodePair(pair, _) => Some(pair.offset),
        _ => None,
    }
}

/// Entity types the `dxf` crate 0.6.2 turns into an entity (its `from_type_string` table, with
/// `3DLINE` read as `LINE`). DIMENSION is handled apart: the crate drops the kinds it does not
/// know.
const CRATE_KNOWN: &[&str] = &[
    "3DFACE",
    "3DSOLID",
    "ACAD_PROXY_ENTITY",
    "ARC",
    "ARCALIGNEDTEXT",
    "ATTDEF",
    "ATTRIB",
    "BODY",
    "CIRCLE",
    "ELLIPSE",
    "HELIX",
    "IMAGE",
    "INSERT",
    "LEADER",
    "LIGHT",
    "LINE",
    "LWPOLYLINE",
    "MLINE",
    "MTEXT",
    "OLEFRAME",
    "OLE2FRAME",
    "POINT",
    "POLYLINE",
    "RAY",
    "REGION",
    "RTEXT",
    "SECTION",
    "SEQEND",
    "SHAPE",
    "SOLID",
    "SPLINE",
    "TEXT",
    "TOLERANCE",
    "TRACE",
    "DGNUNDERLAY",
    "DWFUNDERLAY",
    "PDFUNDERLAY",
    "VERTEX",
    "WIPEOUT",
    "XLINE",
];

/// The DXF type name of a loaded entity, as in [`CRATE_KNOWN`]. Exhaustive on purpose: a new
/// variant in a newer crate must be looked at.
fn loaded_type_name(e: &EntityType) -> &'static str {
    match e {
        EntityType::Face3D(_) => "3DFACE",
        EntityType::Solid3D(_) => "3DSOLID",
        EntityType::ProxyEntity(_) => "ACAD_PROXY_ENTITY",
        EntityType::Arc(_) => "ARC",
        EntityType::ArcAlignedText(_) => "ARCALIGNEDTEXT",
        EntityType::AttributeDefinition(_) => "ATTDEF",
        EntityType::Attribute(_) => "ATTRIB",
        EntityType::Body(_) => "BODY",
        EntityType::Circle(_) => "CIRCLE",
        EntityType::RotatedDimension(_)
        | EntityType::RadialDimension(_)
        | EntityType::DiameterDimension(_)
        | EntityType::AngularThreePointDimension(_)
        | EntityType::OrdinateDimension(_) => "DIMENSION",
        EntityType::Ellipse(_) => "ELLIPSE",
        EntityType::Helix(_) => "HELIX",
        EntityType::Image(_) => "IMAGE",
        EntityType::Insert(_) => "INSERT",
        EntityType::Leader(_) => "LEADER",
        EntityType::Light(_) => "LIGHT",
        EntityType::Line(_) => "LINE",
        EntityType::LwPolyline(_) => "LWPOLYLINE",
        EntityType::MLine(_) => "MLINE",
        EntityType::MText(_) => "MTEXT",
        EntityType::OleFrame(_) => "OLEFRAME",
        EntityType::Ole2Frame(_) => "OLE2FRAME",
        EntityType::ModelPoint(_) => "POINT",
        EntityType::Polyline(_) => "POLYLINE",
        EntityType::Ray(_) => "RAY",
        EntityType::Region(_) => "REGION",
        EntityType::RText(_) => "RTEXT",
        EntityType::Section(_) => "SECTION",
        EntityType::Seqend(_) => "SEQEND",
        EntityType::Shape(_) => "SHAPE",
        EntityType::Solid(_) => "SOLID",
        EntityType::Spline(_) => "SPLINE",
        EntityType::Text(_) => "TEXT",
        EntityType::Tolerance(_) => "TOLERANCE",
        EntityType::Trace(_) => "TRACE",
        EntityType::DgnUnderlay(_) => "DGNUNDERLAY",
        EntityType::DwfUnderlay(_) => "DWFUNDERLAY",
        EntityType::PdfUnderlay(_) => "PDFUNDERLAY",
        EntityType::Vertex(_) => "VERTEX",
        EntityType::Wipeout(_) => "WIPEOUT",
        EntityType::XLine(_) => "XLINE",
    }
}

fn describe_raw(r: &RawRecord) -> String {
    let layer = r.layer.as_deref().unwrap_or("0");
    match &r.handle {
        Some(h) => describe(&r.kind, layer, h, r.line),
        None => describe(&r.kind, layer, &format!("L{}", r.line), r.line),
    }
}

fn label(handle: &str, line: usize) -> String {
    if handle.starts_with('L') {
        format!("line {line}")
    } else {
        format!("handle {handle} at line {line}")
    }
}

fn label_raw(r: &RawRecord) -> String {
    match &r.handle {
        Some(h) => label(h, r.line),
        None => label("L", r.line),
    }
}

/// Notes grouped by entity type and layer, in order of first appearance.
#[derive(Default)]
struct Notes {
    groups: Vec<(String, String, Vec<String>)>,
}

impl Notes {
    /// How many entities of a group are named in the note.
    const SHOWN: usize = 5;

    fn add(&mut self, kind: &str, layer: &str, label: &str) {
        match self
            .groups
            .iter_mut()
            .find(|(k, l, _)| k == kind && l == layer)
        {
            Some((_, _, labels)) => labels.push(label.to_string()),
            None => {
                self.groups
                    .push((kind.to_string(), layer.to_string(), vec![label.to_string()]))
            }
        }
    }

    fn finish(self) -> Vec<String> {
        self.groups
            .into_iter()
            .map(|(kind, layer, labels)| {
                let n = labels.len();
                let mut shown = labels[..n.min(Self::SHOWN)].join(", ");
                if n > Self::SHOWN {
                    shown.push_str(&format!(" and {} more", n - Self::SHOWN));
                }
                let what = if n == 1 {
                    format!("1 {kind} entity")
                } else {
                    format!("{n} {kind} entities")
                };
                format!("ignored {what} on layer {layer} ({shown}): {}", hint(&kind))
            })
            .collect()
    }
}

fn hint(kind: &str) -> &'static str {
    let base = kind.split(' ').next().unwrap_or(kind);
    if kind.contains("paper space") {
        "only model space is read"
    } else if kind.contains("zero") || kind.contains("fewer than") {
        "degenerate, it encloses and joins nothing"
    } else {
        match base {
            "INSERT" => {
                "blocks are not expanded; explode the block in the CAD program if its geometry is to be cut"
            }
            "SPLINE" => {
                "splines are not read; convert them to arcs or a polyline in the CAD program if they are to be cut"
            }
            "HATCH" | "SOLID" | "TRACE" | "WIPEOUT" => {
                "fills are not cut; draw the boundary with lines, arcs or polylines"
            }
            "TEXT" | "MTEXT" | "DIMENSION" | "LEADER" | "TOLERANCE" | "ATTRIB" | "ATTDEF"
            | "RTEXT" | "ARCALIGNEDTEXT" => "annotation is not cut",
            "POLYLINE" => "polygon and polyface meshes are not read",
            _ => "conicut reads LINE, ARC, CIRCLE, LWPOLYLINE, POLYLINE, ELLIPSE and POINT only",
        }
    }
}

/// Context for converting one entity.
struct Ctx<'a> {
    file: &'a str,
    what: String,
    scale: f64,
}

impl Ctx<'_> {
    fn bad(&self, reason: impl Into<String>) -> ReadError {
        ReadError::BadGeometry {
            file: self.file.to_string(),
            what: self.what.clone(),
            reason: reason.into(),
        }
    }

    fn not_flat(&self, n: &dxf::Vector) -> ReadError {
        ReadError::NotFlat {
            file: self.file.to_string(),
            what: self.what.clone(),
            normal: [n.x, n.y, n.z],
        }
    }

    /// Which way the entity's extrusion points: `Ok(false)` for +Z, `Ok(true)` for −Z.
    fn mirrored(&self, n: &dxf::Vector) -> Result<bool, ReadError> {
        let len = (n.x * n.x + n.y * n.y + n.z * n.z).sqrt();
        if !(len > 0.0 && len.is_finite()) {
            return Err(self.not_flat(n));
        }
        if (n.x / len).abs() <= EXTRUSION_TOLERANCE && (n.y / len).abs() <= EXTRUSION_TOLERANCE {
            Ok(n.z < 0.0)
        } else {
            Err(self.not_flat(n))
        }
    }

    /// An OCS point of an entity with extrusion ±Z, in WCS millimetres.
    fn ocs(&self, x: f64, y: f64, mirrored: bool) -> Point {
        let x = if mirrored { -x } else { x };
        Point::new(x * self.scale, y * self.scale)
    }

    fn wcs(&self, p: &dxf::Point) -> Point {
        Point::new(p.x * self.scale, p.y * self.scale)
    }

    fn finite(&self, values: &[f64]) -> Result<(), ReadError> {
        if values.iter().all(|v| v.is_finite()) {
            Ok(())
        } else {
            Err(self
                .bad("holds a value that is not a finite number; correct it in the CAD program"))
        }
    }
}

enum Converted {
    Kind(EntityKind),
    /// Skipped as degenerate, with the reason for the note.
    Degenerate(&'static str),
    Unsupported,
}

fn convert(e: &EntityType, ctx: &Ctx) -> Result<Converted, ReadError> {
    match e {
        EntityType::Line(l) => {
            ctx.finite(&[l.p1.x, l.p1.y, l.p1.z, l.p2.x, l.p2.y, l.p2.z])?;
            if (l.p1.z - l.p2.z).abs() > Z_TOLERANCE {
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
        EntityType::Circle(c) => {
            ctx.finite(&[c.center.x, c.center.y, c.radius])?;
            let m = ctx.mirrored(&c.normal)?;
            if c.radius < 0.0 {
                return Err(ctx.bad(format!(
                    "its radius is negative ({}); correct it in the CAD program",
                    c.radius
                )));
            }
            if c.radius == 0.0 {
                return Ok(Converted::Degenerate("zero radius"));
            }
            Ok(Converted::Kind(EntityKind::Circle {
                center: ctx.ocs(c.center.x, c.center.y, m),
                radius: c.radius * ctx.scale,
            }))
        }
        EntityType::Arc(a) => {
            ctx.finite(&[a.center.x, a.center.y, a.radius, a.start_angle, a.end_angle])?;
            let m = ctx.mirrored(&a.normal)?;
            if a.radius < 0.0 {
                return Err(ctx.bad(format!(
                    "its radius is negative ({}); correct it in the CAD program",
                    a.radius
                )));
            }
            if a.radius == 0.0 {
                return Ok(Converted::Degenerate("zero radius"));
            }
            let center = ctx.ocs(a.center.x, a.center.y, m);
            let radius = a.radius * ctx.scale;
            let diff = a.end_angle - a.start_angle;
            let sweep_deg = diff.rem_euclid(360.0);
            if sweep_deg <= FULL_ARC_TOLERANCE_DEG || 360.0 - sweep_deg <= FULL_ARC_TOLERANCE_DEG {
                if diff.abs() <= FULL_ARC_TOLERANCE_DEG {
                    return Err(ctx.bad(format!(
                        "its start and end angles are equal ({}°), so it has no length; delete \
                         it, or draw a CIRCLE if a full circle is meant",
                        a.start_angle
                    )));
                }
                return Ok(Converted::Kind(EntityKind::Circle { center, radius }));
            }
            // DXF angles are degrees, counter-clockwise about the extrusion direction.
            let start = a.start_angle.to_radians();
            let sweep = sweep_deg.to_radians();
            let arc = if m {
                ArcSegment {
                    center,
                    radius,
                    start_angle: PI - start,
                    sweep: -sweep,
                }
            } else {
                ArcSegment {
                    center,
                    radius,
                    start_angle: start,
                    sweep,
                }
            };
            Ok(Converted::Kind(EntityKind::Arc(arc)))
        }
        EntityType::LwPolyline(p) => {
            let m = ctx.mirrored(&p.extrusion_direction)?;
            let mut vertices = Vec::with_capacity(p.vertices.len());
            for v in &p.vertices {
                ctx.finite(&[v.x, v.y, v.bulge])?;
                let bulge = if m { -v.bulge } else { v.bulge };
                vertices.push((ctx.ocs(v.x, v.y, m), bulge));
            }
            polyline(vertices, p.is_closed())
        }
        EntityType::Polyline(p) => {
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
            if three_d && z_range.1 - z_range.0 > Z_TOLERANCE {
                return Err(ctx.bad(format!(
                    "it is a 3-D polyline whose z runs from {} to {}, so it does not lie in the \
                     XY plane; flatten the drawing in the CAD program",
                    z_range.0, z_range.1
                )));
            }
            polyline(vertices, p.is_closed())
        }
        EntityType::Ellipse(el) => ellipse(el, ctx),
        EntityType::ModelPoint(p) => {
            ctx.finite(&[p.location.x, p.location.y])?;
            Ok(Converted::Kind(EntityKind::Point(ctx.wcs(&p.location))))
        }
        _ => Ok(Converted::Unsupported),
    }
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
    if mj.z.abs() > EXTRUSION_TOLERANCE * major_len {
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
    let center = ctx.wcs(c);
    let u = Vec2::new(mj.x, mj.y) * ctx.scale;
    let a = u.length();
    let b = el.minor_axis_ratio * a;
    let phi = u.angle();
    let e = Ellipse::new(center, a, b, phi).map_err(|err| ctx.bad(err.to_string()))?;

    let diff = el.end_parameter - el.start_parameter;
    let sweep = diff.rem_euclid(TAU);
    if sweep <= FULL_ELLIPSE_TOLERANCE || TAU - sweep <= FULL_ELLIPSE_TOLERANCE {
        return Ok(Converted::Kind(EntityKind::Ellipse {
            ellipse: e,
            start: 0.0,
            end: TAU,
        }));
    }
    // The DXF point at parameter t: C + M cos t + r (N × M) sin t (DXF reference, ELLIPSE);
    // N × M is M turned a quarter turn counter-clockwise for N = +Z, clockwise for N = −Z.
    let minor_dir = if mirrored { -u.perp() } else { u.perp() } * el.minor_axis_ratio;
    let dxf_point = |t: f64| center + u * t.cos() + minor_dir * t.sin();
    // The eccentric anomaly of a point of `e` in `e`'s own frame.
    let anomaly = |p: Point| {
        let q = (p - e.center()).rotated(-e.angle());
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

#[cfg(test)]
mod tests;
