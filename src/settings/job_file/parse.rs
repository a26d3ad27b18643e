//! Walking the parsed TOML document (with its spans) into a [`JobFile`].

use super::context::{Context, Entries, with_article};
use super::keys::TOP_KEYS;
use super::{FeatureSpec, JobFile, JobFileError, JobFileErrorKind as Kind, LeadSpec};
use crate::read::Units;
use std::collections::HashMap;
use toml::Spanned;
use toml::de::{DeTable, DeValue};

/// Parses a job file (schema in the [module docs](super)); `file_name` is used in messages only.
///
/// ```
/// use conicut::settings::job_file::{parse_job_file, FeatureSource, Rule};
///
/// let job = parse_job_file(
///     "units = \"in\"\n[[feature]]\nname = \"vent\"\nbay = \"bay 1\"\nrule = \"area\"\narea = 2.0\n",
///     "job.toml",
/// )
/// .unwrap();
/// let FeatureSource::Bay { rule: Rule::Area(area), .. } = job.features[0].source else {
///     panic!("a bay feature")
/// };
/// assert!((area - 2.0 * 25.4 * 25.4).abs() < 1e-9);
/// ```
pub fn parse_job_file(text: &str, file_name: &str) -> Result<JobFile, JobFileError> {
    let cx = Context::new(text, file_name);
    let doc = DeTable::parse(text).map_err(|e| cx.syntax(&e))?;
    let top = Entries::new(&cx, doc.get_ref());
    for e in &top.list {
        if !TOP_KEYS.contains(&e.key) {
            return Err(cx.unknown_key(e, &TOP_KEYS, "at the top of the job file"));
        }
    }
    let units = units(&cx, &top)?;
    let scale = units.mm_per_unit();
    let margin = top.get("margin").map(|e| cx.margin(e, scale)).transpose()?;
    let bay_layer = top.get("bay_layer").map(|e| cx.string(e)).transpose()?;
    let leads = leads(&cx, &top, scale)?;
    let feed = top
        .get("feed")
        .map(|e| cx.size(e, scale, "the feed"))
        .transpose()?;
    let plunge_feed = top
        .get("plunge_feed")
        .map(|e| cx.size(e, scale, "the plunge feed"))
        .transpose()?;
    let spindle_speed = top
        .get("spindle_speed")
        .map(|e| cx.size(e, 1.0, "the spindle speed"))
        .transpose()?;
    let cut_layers = top
        .get("cut_layers")
        .map(|e| cx.layer_names(e))
        .transpose()?;
    let skip_layers = top
        .get("skip_layers")
        .map(|e| cx.layer_names(e))
        .transpose()?;
    let zero = top
        .get("zero")
        .map(|e| cx.work_zero(e, scale))
        .transpose()?;
    let work_offset = top
        .get("work_offset")
        .map(|e| cx.work_offset(e))
        .transpose()?;
    let features = features(&cx, feature_tables(&cx, &top)?, scale)?;
    Ok(JobFile {
        units,
        margin,
        bay_layer,
        cut_layers,
        skip_layers,
        feed,
        plunge_feed,
        spindle_speed,
        zero,
        work_offset,
        leads,
        features,
    })
}

/// The file's `units`, which it must give (none is guessed).
fn units(cx: &Context<'_>, top: &Entries<'_, '_>) -> Result<Units, JobFileError> {
    Ok(match top.get("units") {
        None => {
            return Err(cx.error(
                None,
                Some("units"),
                Kind::Missing,
                "the job file does not say its units; add `units = \"mm\"` or `units = \"in\"` \
                 at the top: every coordinate and size in the file is in that unit, and none is \
                 guessed"
                    .into(),
            ));
        }
        Some(e) => {
            let word = cx.string(e)?;
            word.parse::<Units>().map_err(|_| {
                cx.at(
                    e,
                    Kind::BadValue,
                    format!("unknown unit \"{word}\"; use \"mm\" or \"in\""),
                )
            })?
        }
    })
}

/// The lead keys at the top of the file, converted to mm.
fn leads(cx: &Context<'_>, top: &Entries<'_, '_>, scale: f64) -> Result<LeadSpec, JobFileError> {
    Ok(LeadSpec {
        shape: top.get("lead").map(|e| cx.lead_shape(e)).transpose()?,
        length: top
            .get("lead_length")
            .map(|e| cx.not_negative(e, scale, "the lead length"))
            .transpose()?,
        radius: top
            .get("lead_radius")
            .map(|e| cx.size(e, scale, "the lead radius"))
            .transpose()?,
        overcut: top
            .get("overcut")
            .map(|e| cx.not_negative(e, scale, "the overcut"))
            .transpose()?,
        lead_out: top.get("lead_out").map(|e| cx.boolean(e)).transpose()?,
    })
}

/// The `[[feature]]` tables: a list of one or more.
fn feature_tables<'a, 'i>(
    cx: &Context<'_>,
    top: &Entries<'a, 'i>,
) -> Result<&'a [Spanned<DeValue<'i>>], JobFileError> {
    let Some(feature_entry) = top.get("feature") else {
        return Err(cx.error(
            None,
            Some("feature"),
            Kind::Missing,
            "the job file lists no features; add a `[[feature]]` table for each ellipse to cut"
                .into(),
        ));
    };
    let tables = match feature_entry.value.get_ref() {
        DeValue::Array(items) => items,
        DeValue::Table(_) => {
            return Err(cx.at(
                feature_entry,
                Kind::WrongType,
                "`[feature]` is a single table; write `[[feature]]` (double brackets) above each \
                 feature"
                    .into(),
            ));
        }
        other => {
            return Err(cx.at(
                feature_entry,
                Kind::WrongType,
                format!(
                    "`feature` must be a list of tables, one `[[feature]]` per feature, not {}",
                    with_article(other.type_str())
                ),
            ));
        }
    };
    if tables.is_empty() {
        return Err(cx.at(
            feature_entry,
            Kind::Missing,
            "the feature list is empty; add a `[[feature]]` table for each ellipse to cut".into(),
        ));
    }

    Ok(tables)
}

/// Every feature, each name used once (compared trimmed and ignoring case).
fn features(
    cx: &Context<'_>,
    tables: &[Spanned<DeValue<'_>>],
    scale: f64,
) -> Result<Vec<FeatureSpec>, JobFileError> {
    let mut features: Vec<FeatureSpec> = Vec::with_capacity(tables.len());
    // Each name's line, by its trimmed lower-case form: a map, so that a file of thousands of
    // features is checked in linear time.
    let mut name_lines: HashMap<String, usize> = HashMap::with_capacity(tables.len());
    for item in tables {
        let line = cx.line(item.span().start);
        let DeValue::Table(table) = item.get_ref() else {
            return Err(cx.error(
                Some(line),
                Some("feature"),
                Kind::WrongType,
                format!(
                    "each feature must be a table (`[[feature]]` followed by its keys), not {}",
                    with_article(item.get_ref().type_str())
                ),
            ));
        };
        let (spec, name_line) = cx.feature(line, table, scale)?;
        let key = spec.name.trim().to_lowercase();
        if let Some(&first_line) = name_lines.get(&key) {
            return Err(cx.error(
                Some(name_line),
                Some("name"),
                Kind::Duplicate,
                format!(
                    "the name \"{}\" is already used by the feature on line {}; give each \
                     feature its own name",
                    spec.name, first_line
                ),
            ));
        }
        name_lines.insert(key, name_line);
        features.push(spec);
    }

    Ok(features)
}
