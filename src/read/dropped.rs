//! Detecting entities the `dxf` crate dropped: each record the file's own scan found is matched
//! with the next entity the crate loaded, by type; a record of a type the crate knows with no
//! loaded entity to match is an entity lost.

use super::ReadError;
use super::notes::describe_raw;
use super::raw::RawRecord;
use dxf::entities::{Entity, EntityType};

/// The loaded entity `candidate` if it is the record `rec` (of DXF type `kind`, `3DLINE` read as
/// `LINE`); `None` for a record the crate does not turn into an entity (a note for the user);
/// an error when the crate should have loaded it but did not.
pub(super) fn match_loaded<'a>(
    kind: &str,
    rec: &RawRecord,
    candidate: Option<&'a Entity>,
    file: &str,
) -> Result<Option<&'a Entity>, ReadError> {
    match (kind, candidate) {
        ("DIMENSION", Some(e)) if loaded_type_name(&e.specific) == "DIMENSION" => Ok(Some(e)),
        // The crate drops dimensions of a kind it does not know; they are only notes to us.
        ("DIMENSION", _) => Ok(None),
        (k, Some(e)) if CRATE_KNOWN.contains(&k) && loaded_type_name(&e.specific) == k => {
            Ok(Some(e))
        }
        (k, _) if CRATE_KNOWN.contains(&k) => Err(ReadError::EntityLost {
            file: file.to_string(),
            line: rec.line,
            what: describe_raw(rec),
        }),
        _ => Ok(None),
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
