//! Loading a file: the text checked and scanned on its own ([`super::raw`]), the `dxf` crate's
//! load, the units, and each scanned record matched with what the crate loaded.

use super::blocks::{Affine, Blocks, Expansion};
use super::convert::{Converted, convert};
use super::dropped::match_loaded;
use super::entity::describe;
use super::notes::{Notes, describe_raw, label, label_raw};
use super::ocs::Ctx;
use super::prepass::prepare;
use super::raw::{self, RawRecord, RawScan};
use super::{Drawing, Entity, Layer, ReadError, ReadOptions, Units, UnitsSource};

/// Reads an ASCII DXF file's bytes. See the module documentation for what is read and how.
pub fn read_dxf(bytes: &[u8], opts: &ReadOptions) -> Result<Drawing, ReadError> {
    let file = opts.file_name.to_string();
    refuse_non_text(bytes, &file)?;
    let scan = scan_text(bytes, &file)?;
    let loaded = load_with_crate(bytes, &file)?;
    let (units, units_from) =
        resolve_units(&file, scan.insunits, scan.version.as_deref(), opts.units)?;
    let loaded_entities: Vec<&dxf::entities::Entity> = loaded.entities().collect();
    let mut found = Found::default();
    let blocks = Blocks::of(&loaded);
    let matched = collect(
        &Source {
            file: &file,
            scale: units.mm_per_unit(),
            blocks: &blocks,
        },
        &scan.records,
        &loaded_entities,
        &mut found,
    )?;
    if matched != loaded_entities.len() {
        return Err(ReadError::CountMismatch {
            file,
            loaded: loaded_entities.len(),
            counted: matched,
        });
    }
    let layers = scan
        .layers
        .iter()
        .map(|l| Layer {
            name: l.name.clone(),
            frozen: l.flags & 1 != 0,
            off: l.colour < 0,
            plotted: l.plotted,
        })
        .collect();
    Ok(Drawing {
        entities: found.entities,
        units,
        units_from,
        notes: found.notes.finish(),
        layers,
    })
}

/// Refuses binary DXF and anything holding NUL bytes.
fn refuse_non_text(bytes: &[u8], file: &str) -> Result<(), ReadError> {
    let file = file.to_string();
    if bytes.starts_with(b"AutoCAD Binary DXF") || bytes.starts_with(b"AutoCAD DXB") {
        return Err(ReadError::Binary { file });
    }
    if bytes.contains(&0) {
        return Err(ReadError::NotDxf {
            file,
            reason: "it holds NUL bytes, so it is not text".into(),
        });
    }
    Ok(())
}

/// The file's own scan: every numeric value of the ENTITIES section checked, the records listed.
fn scan_text(bytes: &[u8], file: &str) -> Result<RawScan, ReadError> {
    let text = String::from_utf8_lossy(bytes);
    let scan = raw::scan(&text).map_err(|b| {
        let what = match &b.record {
            Some(r) => describe_raw(r),
            None => "an entity".to_string(),
        };
        ReadError::BadNumber {
            file: file.to_string(),
            line: b.line,
            code: b.code,
            value: b.value,
            what,
        }
    })?;
    if !scan.has_entities_section {
        return Err(ReadError::NotDxf {
            file: file.to_string(),
            reason: "it has no ENTITIES section".into(),
        });
    }
    Ok(scan)
}

/// The drawing as the `dxf` crate loads it (after the same pre-pass and with panics contained),
/// for writing a copy of it.
pub fn load_for_copy(bytes: &[u8], file: &str) -> Result<dxf::Drawing, ReadError> {
    refuse_non_text(bytes, file)?;
    load_with_crate(bytes, file)
}

/// The `dxf` crate's load of the file's text as [`prepare`]d: the parts conicut does not use
/// left out, the crate's line numbers mapped back to the file's, and a panic inside the crate
/// contained and turned into [`ReadError::LibraryPanic`].
fn load_with_crate(bytes: &[u8], file: &str) -> Result<dxf::Drawing, ReadError> {
    let prepared = prepare(bytes);
    let loaded =
        contain_panics(|| dxf::Drawing::load(&mut &prepared.text[..])).map_err(|message| {
            ReadError::LibraryPanic {
                file: file.to_string(),
                message,
            }
        })?;
    loaded.map_err(|e| ReadError::Load {
        file: file.to_string(),
        line: dxf_error_line(&e).map(|l| prepared.original_line(l)),
        message: e.to_string(),
    })
}

thread_local! {
    /// Set while a library call runs whose panics are caught and reported in words.
    static CONTAINING: std::cell::Cell<bool> = const { std::cell::Cell::new(false) };
}

/// Whether this thread is inside a library call whose panic is contained (a panic hook may then
/// stay quiet: the panic becomes a clear error).
pub fn library_panicking() -> bool {
    CONTAINING.with(|c| c.get())
}

/// Runs `f`, turning a panic into its message.
fn contain_panics<T>(f: impl FnOnce() -> T) -> Result<T, String> {
    CONTAINING.with(|c| c.set(true));
    let result = std::panic::catch_unwind(std::panic::AssertUnwindSafe(f));
    CONTAINING.with(|c| c.set(false));
    result.map_err(|payload| {
        payload
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| payload.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "an internal error".to_string())
    })
}

/// What the records gave: entities kept, and notes on the rest.
#[derive(Default)]
struct Found {
    entities: Vec<Entity>,
    notes: Notes,
}

/// What every entity is read against: the file's name, its unit's scale to mm, its blocks.
struct Source<'a> {
    file: &'a str,
    scale: f64,
    blocks: &'a Blocks<'a>,
}

/// Walks the scanned records in step with the loaded entities; returns how many loaded entities
/// were matched.
fn collect(
    src: &Source,
    records: &[RawRecord],
    loaded: &[&dxf::entities::Entity],
    found: &mut Found,
) -> Result<usize, ReadError> {
    let mut next = 0;
    for rec in records {
        let kind = if rec.kind == "3DLINE" {
            "LINE"
        } else {
            rec.kind.as_str()
        };
        match match_loaded(kind, rec, loaded.get(next).copied(), src.file)? {
            None => found.notes.add(
                &rec.kind,
                rec.layer.as_deref().unwrap_or("0"),
                &label_raw(rec),
            ),
            Some(ent) => {
                next += 1;
                take(src, rec, kind, ent, found)?;
            }
        }
    }
    Ok(next)
}

/// One matched record: its polyline vertices counted, paper space noted, an INSERT expanded
/// ([`super::blocks`]), the geometry converted.
fn take(
    src: &Source,
    rec: &RawRecord,
    kind: &str,
    ent: &dxf::entities::Entity,
    found: &mut Found,
) -> Result<(), ReadError> {
    let handle = rec
        .handle
        .clone()
        .unwrap_or_else(|| format!("L{}", rec.line));
    let (file, scale) = (src.file, src.scale);
    let layer = ent.common.layer.clone();
    let ctx = Ctx {
        file,
        what: describe(kind, &layer, &handle, rec.line),
        scale,
    };
    if let dxf::entities::EntityType::Polyline(p) = &ent.specific
        && p.vertices().count() != rec.vertices
    {
        return Err(ReadError::EntityLost {
            file: file.to_string(),
            line: rec.line,
            what: ctx.what,
        });
    }
    let notes = &mut found.notes;
    if ent.common.is_in_paper_space {
        notes.add(
            &format!("{} (paper space)", rec.kind),
            &layer,
            &label(&handle, rec.line),
        );
        return Ok(());
    }
    if let dxf::entities::EntityType::Insert(ins) = &ent.specific {
        let mut expansion = Expansion {
            blocks: src.blocks,
            ctx: &ctx,
            line: rec.line,
            out: &mut found.entities,
            notes: &mut found.notes,
        };
        return expansion.insert(
            ins,
            &layer,
            &handle,
            Affine::scaling(scale),
            &mut Vec::new(),
        );
    }
    match convert(&ent.specific, &ctx)? {
        Converted::Kind(kind) => found.entities.push(Entity {
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
    Ok(())
}

fn resolve_units(
    file: &str,
    insunits: Option<i64>,
    version: Option<&str>,
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
            why: no_units_reason(version, insunits),
        }),
    }
}

/// Why a drawing states no units: R12 and older (`$ACADVER` AC1009 and below) have no units
/// field; later versions leave `$INSUNITS` out or at 0 (unitless).
fn no_units_reason(version: Option<&str>, insunits: Option<i64>) -> String {
    let old = version.is_some_and(|v| {
        v.strip_prefix("AC")
            .and_then(|n| n.parse::<u32>().ok())
            .is_some_and(|n| n <= 1009)
    });
    match (old, insunits, version) {
        (true, _, Some(v)) => format!(
            "it is an R12 or older drawing ($ACADVER {v}), and those have no units field; \
             $INSUNITS came with R2000"
        ),
        (_, Some(0), _) => "$INSUNITS is 0, unitless".to_string(),
        (_, _, None) => "its header has neither $INSUNITS nor $ACADVER".to_string(),
        _ => "$INSUNITS is missing from its header".to_string(),
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
