//! Walking the parsed TOML document (with its spans) into a [`JobFile`].

use super::{
    BaySelect, CutKind, FeatureSource, FeatureSpec, FitPoints, JobFile, JobFileError,
    JobFileErrorKind as Kind, LeadShape, LeadSpec, LineSource, PointSource, Rule,
};
use crate::geom::Point;
use crate::read::Units;
use crate::settings::toml_text::LineIndex;
use toml::Spanned;
use toml::de::{DeTable, DeValue};

/// Keys allowed at the top of a job file.
const TOP_KEYS: [&str; 9] = [
    "units",
    "margin",
    "bay_layer",
    "lead",
    "lead_length",
    "lead_radius",
    "overcut",
    "lead_out",
    "feature",
];

/// Keys allowed in a `[[feature]]` table.
const FEATURE_KEYS: [&str; 18] = [
    "name",
    "cut",
    "bay",
    "inside",
    "rule",
    "margin",
    "area",
    "semi_axes_squared",
    "semi_major",
    "semi_minor",
    "centre",
    "through",
    "touching",
    "through_layer",
    "touching_layer",
    "choose",
    "fit_csv",
    "fit_layer",
];

const BAY_SOURCE: [&str; 2] = ["bay", "inside"];
const CONSTRAINT_SOURCE: [&str; 4] = ["through", "touching", "through_layer", "touching_layer"];
const FIT_SOURCE: [&str; 2] = ["fit_csv", "fit_layer"];

/// Keys that belong to bay features only.
const BAY_ONLY: [&str; 7] = [
    "rule",
    "margin",
    "area",
    "semi_axes_squared",
    "semi_major",
    "semi_minor",
    "centre",
];

/// Rules by their job-file keyword, with the key of their value (if any).
const RULES: [(&str, Option<&str>); 8] = [
    ("largest", None),
    ("largest-inside", None),
    ("roundest", None),
    ("area", Some("area")),
    ("semi-axes-squared", Some("semi_axes_squared")),
    ("semi-major", Some("semi_major")),
    ("semi-minor", Some("semi_minor")),
    ("centre-near", Some("centre")),
];

/// A constraints feature needs this many points plus lines.
const CONSTRAINT_COUNT: usize = 5;

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

    let units = match top.get("units") {
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
    };
    let scale = units.mm_per_unit();
    let margin = top.get("margin").map(|e| cx.margin(e, scale)).transpose()?;
    let bay_layer = top.get("bay_layer").map(|e| cx.string(e)).transpose()?;
    let leads = LeadSpec {
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
    };

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

    let mut features: Vec<FeatureSpec> = Vec::new();
    let mut name_lines: Vec<usize> = Vec::new();
    for item in tables.iter() {
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
        if let Some(i) = features
            .iter()
            .position(|f| f.name.trim().to_lowercase() == key)
        {
            return Err(cx.error(
                Some(name_line),
                Some("name"),
                Kind::Duplicate,
                format!(
                    "the name \"{}\" is already used by the feature on line {}; give each \
                     feature its own name",
                    spec.name, name_lines[i]
                ),
            ));
        }
        features.push(spec);
        name_lines.push(name_line);
    }

    Ok(JobFile {
        units,
        margin,
        bay_layer,
        leads,
        features,
    })
}

/// The text being parsed, for line numbers and messages.
struct Context<'t> {
    file: &'t str,
    /// Where each line starts.
    lines: LineIndex,
}

/// One key of a table with its value and the line the key is on.
struct Entry<'a, 'i> {
    key: &'a str,
    line: usize,
    value: &'a Spanned<DeValue<'i>>,
}

/// A table's entries in the order of the file.
struct Entries<'a, 'i> {
    list: Vec<Entry<'a, 'i>>,
}

impl<'a, 'i> Entries<'a, 'i> {
    fn new(cx: &Context<'_>, table: &'a DeTable<'i>) -> Self {
        let mut list: Vec<Entry<'a, 'i>> = table
            .iter()
            .map(|(k, v)| Entry {
                key: k.get_ref().as_ref(),
                line: cx.line(k.span().start),
                value: v,
            })
            .collect();
        list.sort_by_key(|e| (e.line, e.value.span().start));
        Entries { list }
    }

    fn get(&self, key: &str) -> Option<&Entry<'a, 'i>> {
        self.list.iter().find(|e| e.key == key)
    }

    /// The first (by line) of `keys` present.
    fn first_of(&self, keys: &[&str]) -> Option<&Entry<'a, 'i>> {
        self.list.iter().find(|e| keys.contains(&e.key))
    }
}

impl<'t> Context<'t> {
    fn new(text: &'t str, file: &'t str) -> Self {
        Context {
            file,
            lines: LineIndex::new(text),
        }
    }

    /// The 1-based line holding byte `offset`.
    fn line(&self, offset: usize) -> usize {
        self.lines.line(offset)
    }

    fn error(
        &self,
        line: Option<usize>,
        key: Option<&str>,
        kind: Kind,
        message: String,
    ) -> JobFileError {
        JobFileError {
            file: self.file.to_string(),
            line,
            key: key.map(str::to_string),
            kind,
            message,
        }
    }

    /// A feature that reached a source's reader without the keys that make that source (the
    /// callers check first, so this is a safety net rather than an expected message).
    fn no_source(&self, what: &str, keys: &str) -> JobFileError {
        self.error(None, None, Kind::Missing, format!("{what} needs {keys}"))
    }

    /// An error at an entry's key.
    fn at(&self, e: &Entry<'_, '_>, kind: Kind, message: String) -> JobFileError {
        self.error(Some(e.line), Some(e.key), kind, message)
    }

    /// An error at one element of an entry's value (its own line, for lists over several lines).
    fn at_item(
        &self,
        e: &Entry<'_, '_>,
        item: &Spanned<DeValue<'_>>,
        kind: Kind,
        message: String,
    ) -> JobFileError {
        self.error(
            Some(self.line(item.span().start)),
            Some(e.key),
            kind,
            message,
        )
    }

    fn syntax(&self, e: &toml::de::Error) -> JobFileError {
        let line = e.span().map(|s| self.line(s.start));
        self.error(
            line,
            None,
            Kind::Syntax,
            format!(
                "this is not valid TOML: {}; check the quotes, brackets and `=` signs",
                e.message().trim()
            ),
        )
    }

    fn unknown_key(&self, e: &Entry<'_, '_>, allowed: &[&str], place: &str) -> JobFileError {
        let hint = match suggestion(e.key, allowed) {
            Some(s) => format!("did you mean `{s}`? "),
            None => String::new(),
        };
        self.at(
            e,
            Kind::UnknownKey,
            format!(
                "unknown key `{}` {place}; {hint}Allowed here: {}",
                e.key,
                allowed
                    .iter()
                    .map(|k| format!("`{k}`"))
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
        )
    }

    fn wrong_type(
        &self,
        e: &Entry<'_, '_>,
        value: &Spanned<DeValue<'_>>,
        want: &str,
    ) -> JobFileError {
        self.at_item(
            e,
            value,
            Kind::WrongType,
            format!(
                "expected {want} but found {}{}",
                with_article(value.get_ref().type_str()),
                if value.get_ref().is_str() && want.contains("number") {
                    "; write the number without quotes"
                } else {
                    ""
                }
            ),
        )
    }

    /// A non-empty string.
    fn string(&self, e: &Entry<'_, '_>) -> Result<String, JobFileError> {
        match e.value.get_ref() {
            DeValue::String(s) if !s.trim().is_empty() => Ok(s.to_string()),
            DeValue::String(_) => Err(self.at(
                e,
                Kind::BadValue,
                "the text is empty; write a name between the quotes".into(),
            )),
            _ => Err(self.wrong_type(e, e.value, "text in quotes")),
        }
    }

    /// A finite number (integer or float), unconverted.
    fn number_of(
        &self,
        e: &Entry<'_, '_>,
        value: &Spanned<DeValue<'_>>,
    ) -> Result<f64, JobFileError> {
        let parsed = match value.get_ref() {
            DeValue::Integer(i) => i64::from_str_radix(&i.as_str().replace('_', ""), i.radix())
                .ok()
                .map(|v| v as f64),
            DeValue::Float(f) => f.as_str().replace('_', "").parse::<f64>().ok(),
            _ => return Err(self.wrong_type(e, value, "a number")),
        };
        match parsed {
            Some(v) if v.is_finite() => Ok(v),
            _ => Err(self.at_item(
                e,
                value,
                Kind::BadValue,
                "the number is not finite; give an ordinary number such as 12.5".into(),
            )),
        }
    }

    /// A length that may be zero, multiplied by the unit's scale.
    fn not_negative(&self, e: &Entry<'_, '_>, scale: f64, what: &str) -> Result<f64, JobFileError> {
        let v = self.number_of(e, e.value)?;
        if v < 0.0 {
            return Err(self.at(
                e,
                Kind::BadValue,
                format!("{what} is {v}; it must be zero or positive"),
            ));
        }
        Ok(v * scale)
    }

    /// `true` or `false`.
    fn boolean(&self, e: &Entry<'_, '_>) -> Result<bool, JobFileError> {
        match e.value.get_ref() {
            DeValue::Boolean(b) => Ok(*b),
            _ => Err(self.wrong_type(e, e.value, "true or false")),
        }
    }

    /// A lead shape by name.
    fn lead_shape(&self, e: &Entry<'_, '_>) -> Result<LeadShape, JobFileError> {
        let word = self.string(e)?;
        match word.as_str() {
            "straight" => Ok(LeadShape::Straight),
            "line" => Ok(LeadShape::Line),
            "arc" => Ok(LeadShape::Arc),
            "line-arc" => Ok(LeadShape::LineArc),
            _ => Err(self.at(
                e,
                Kind::BadValue,
                format!(
                    "unknown lead shape \"{word}\"; use \"straight\", \"line\", \"arc\" or \
                     \"line-arc\""
                ),
            )),
        }
    }

    /// A margin: zero or positive, converted to mm.
    fn margin(&self, e: &Entry<'_, '_>, scale: f64) -> Result<f64, JobFileError> {
        let v = self.number_of(e, e.value)?;
        if v < 0.0 {
            return Err(self.at(
                e,
                Kind::BadValue,
                format!("the edge margin is {v}; it must be zero or positive"),
            ));
        }
        Ok(v * scale)
    }

    /// A positive size, multiplied by `factor` (the unit's scale, or its square for areas).
    fn size(&self, e: &Entry<'_, '_>, factor: f64, what: &str) -> Result<f64, JobFileError> {
        let v = self.number_of(e, e.value)?;
        if v <= 0.0 {
            return Err(self.at(
                e,
                Kind::BadValue,
                format!("{what} is {v}; it must be positive"),
            ));
        }
        Ok(v * factor)
    }

    /// `[x, y]`, converted to mm.
    fn point_of(
        &self,
        e: &Entry<'_, '_>,
        value: &Spanned<DeValue<'_>>,
        scale: f64,
    ) -> Result<Point, JobFileError> {
        match value.get_ref() {
            DeValue::Array(xy) if xy.len() == 2 => Ok(Point::new(
                self.number_of(e, &xy[0])? * scale,
                self.number_of(e, &xy[1])? * scale,
            )),
            DeValue::Array(xy) => Err(self.at_item(
                e,
                value,
                Kind::BadValue,
                format!(
                    "a point is two numbers `[x, y]`, but this list has {}",
                    xy.len()
                ),
            )),
            _ => Err(self.wrong_type(e, value, "a point `[x, y]`")),
        }
    }

    /// A list of items, each read by `item`.
    fn list_of<T>(
        &self,
        e: &Entry<'_, '_>,
        want: &str,
        mut item: impl FnMut(&Spanned<DeValue<'_>>) -> Result<T, JobFileError>,
    ) -> Result<Vec<T>, JobFileError> {
        match e.value.get_ref() {
            DeValue::Array(items) => items.iter().map(&mut item).collect(),
            _ => Err(self.wrong_type(e, e.value, want)),
        }
    }

    /// `[[x, y], …]`, converted to mm.
    fn points(&self, e: &Entry<'_, '_>, scale: f64) -> Result<Vec<Point>, JobFileError> {
        self.list_of(e, "a list of points `[[x, y], …]`", |v| {
            self.point_of(e, v, scale)
        })
    }

    /// `[[[x1, y1], [x2, y2]], …]`: lines by two distinct points, converted to mm.
    fn lines(&self, e: &Entry<'_, '_>, scale: f64) -> Result<Vec<(Point, Point)>, JobFileError> {
        self.list_of(e, "a list of lines `[[[x1, y1], [x2, y2]], …]`", |v| {
            let DeValue::Array(pair) = v.get_ref() else {
                return Err(self.wrong_type(e, v, "a line `[[x1, y1], [x2, y2]]`"));
            };
            if pair.len() != 2 {
                return Err(self.at_item(
                    e,
                    v,
                    Kind::BadValue,
                    format!(
                        "a line is given by two points `[[x1, y1], [x2, y2]]`, but this one has \
                         {} entries",
                        pair.len()
                    ),
                ));
            }
            let (p, q) = (
                self.point_of(e, &pair[0], scale)?,
                self.point_of(e, &pair[1], scale)?,
            );
            if p == q {
                return Err(self.at_item(
                    e,
                    v,
                    Kind::BadValue,
                    "the two points of this line are the same point; give two different points \
                     on the line"
                        .into(),
                ));
            }
            Ok((p, q))
        })
    }

    /// One `[[feature]]` table whose header is on `line`; returns the spec and the line of its
    /// name.
    fn feature(
        &self,
        line: usize,
        table: &DeTable<'_>,
        scale: f64,
    ) -> Result<(FeatureSpec, usize), JobFileError> {
        let entries = Entries::new(self, table);
        let place = format!("in the feature on line {line}");
        for e in &entries.list {
            if !FEATURE_KEYS.contains(&e.key) {
                return Err(self.unknown_key(e, &FEATURE_KEYS, &place));
            }
        }
        let Some(name_entry) = entries.get("name") else {
            return Err(self.error(
                Some(line),
                Some("name"),
                Kind::Missing,
                "this feature has no name; add `name = \"…\"` (each feature needs its own, for \
                 the report and the program's comments)"
                    .into(),
            ));
        };
        let name = self.string(name_entry)?;
        let cut = match entries.get("cut") {
            None => CutKind::Hole,
            Some(e) => match self.string(e)?.as_str() {
                "hole" => CutKind::Hole,
                "boss" => CutKind::Boss,
                "pocket" => CutKind::Pocket,
                other => {
                    return Err(self.at(
                        e,
                        Kind::BadValue,
                        format!("unknown cut \"{other}\"; use \"hole\", \"boss\" or \"pocket\""),
                    ));
                }
            },
        };

        // Exactly one kind of source.
        let groups = [
            entries.first_of(&BAY_SOURCE),
            entries.first_of(&CONSTRAINT_SOURCE),
            entries.first_of(&FIT_SOURCE),
        ];
        let mut present: Vec<&Entry<'_, '_>> = groups.iter().flatten().copied().collect();
        present.sort_by_key(|e| e.line);
        if present.len() > 1 {
            let (first, second) = (present[0], present[1]);
            return Err(self.at(
                second,
                Kind::Conflict,
                format!(
                    "feature \"{name}\" already takes its ellipse from `{}` (line {}); a feature \
                     has one source: a bay (`bay` or `inside`), constraints (`through`, \
                     `touching`), or a fit (`fit_csv` or `fit_layer`). Remove one, or make two \
                     features",
                    first.key, first.line
                ),
            ));
        }
        let what = format!("feature \"{name}\"");
        let source = if groups[0].is_some() {
            self.bay_source(line, &entries, &what, scale)?
        } else if groups[1].is_some() {
            self.constraints_source(&entries, &what, scale)?
        } else if groups[2].is_some() {
            self.fit_source(&entries, &what)?
        } else {
            return Err(self.error(
                Some(line),
                None,
                Kind::Missing,
                format!(
                    "{what} does not say where its ellipse comes from; give `bay` or `inside` (a \
                     bay of the drawing), `through` and `touching` (five points and lines), or \
                     `fit_csv` or `fit_layer` (measured points)"
                ),
            ));
        };
        let margin = match &source {
            FeatureSource::Bay { .. } => entries
                .get("margin")
                .map(|e| self.margin(e, scale))
                .transpose()?,
            _ => None,
        };
        Ok((
            FeatureSpec {
                name,
                line,
                source,
                cut,
                margin,
            },
            name_entry.line,
        ))
    }

    /// Refuses the first of `keys` present: they do not belong to this kind of feature.
    fn refuse_foreign(
        &self,
        entries: &Entries<'_, '_>,
        keys: &[&str],
        why: &str,
    ) -> Result<(), JobFileError> {
        match entries.first_of(keys) {
            Some(e) => Err(self.at(e, Kind::Conflict, format!("`{}` {why}", e.key))),
            None => Ok(()),
        }
    }

    /// Two keys that give the same thing two ways: refuse the later one.
    fn refuse_both(
        &self,
        entries: &Entries<'_, '_>,
        a: &str,
        b: &str,
        what: &str,
    ) -> Result<(), JobFileError> {
        if let (Some(x), Some(y)) = (entries.get(a), entries.get(b)) {
            let (first, second) = if x.line <= y.line { (x, y) } else { (y, x) };
            return Err(self.at(
                second,
                Kind::Conflict,
                format!(
                    "`{}` and `{}` (line {}) both give {what}; keep one of them",
                    second.key, first.key, first.line
                ),
            ));
        }
        Ok(())
    }

    fn bay_source(
        &self,
        line: usize,
        entries: &Entries<'_, '_>,
        what: &str,
        scale: f64,
    ) -> Result<FeatureSource, JobFileError> {
        self.refuse_foreign(
            entries,
            &["choose"],
            &format!(
                "picks one of several solutions of a `through`/`touching` feature; {what} is a \
                 bay feature, which picks its ellipse by `rule`. Remove `choose`"
            ),
        )?;
        self.refuse_both(entries, "bay", "inside", &format!("the bay of {what}"))?;
        let select = match (entries.get("bay"), entries.get("inside")) {
            (Some(e), _) => BaySelect::Name(self.string(e)?),
            (None, Some(e)) => BaySelect::Inside(self.point_of(e, e.value, scale)?),
            (None, None) => return Err(self.no_source(what, "`bay` or `inside`")),
        };

        let (keyword, rule_line, rule_given) = match entries.get("rule") {
            Some(e) => (self.string(e)?, e.line, true),
            None => ("largest".to_string(), line, false),
        };
        let Some(&(_, value_key)) = RULES.iter().find(|(k, _)| *k == keyword) else {
            // Only a rule written in the file can be unknown: the default is "largest".
            return Err(self.error(
                Some(rule_line),
                Some("rule"),
                Kind::BadValue,
                format!(
                    "unknown rule \"{keyword}\"; use one of {}",
                    RULES
                        .iter()
                        .map(|(k, _)| format!("\"{k}\""))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            ));
        };
        // Value keys of other rules do not belong.
        for e in &entries.list {
            let Some(&(owner, _)) = RULES.iter().find(|(_, v)| *v == Some(e.key)) else {
                continue;
            };
            if Some(e.key) != value_key {
                let this_rule = if rule_given {
                    format!("its rule is \"{keyword}\"")
                } else {
                    "it has no `rule` (so \"largest\")".to_string()
                };
                return Err(self.at(
                    e,
                    Kind::Conflict,
                    format!(
                        "`{}` is the value of rule \"{owner}\", but {this_rule}; remove `{}` or \
                         set `rule = \"{owner}\"`",
                        e.key, e.key
                    ),
                ));
            }
        }
        let value = |key: &str| {
            entries.get(key).ok_or_else(|| {
                self.error(
                    Some(rule_line),
                    Some(key),
                    Kind::Missing,
                    format!(
                        "rule \"{keyword}\" of {what} needs its value; add `{key} = {}",
                        match key {
                            "centre" => "[x, y]` (a point, in the file's units)",
                            "area" => "…` (an area, in square units of the file)",
                            "semi_axes_squared" => "…` (a² + b², in square units of the file)",
                            _ => "…` (a length, in the file's units)",
                        }
                    ),
                )
            })
        };
        let area = scale * scale;
        let rule = match keyword.as_str() {
            "largest" => Rule::Largest,
            "largest-inside" => Rule::LargestInside,
            "roundest" => Rule::Roundest,
            "area" => Rule::Area(self.size(value("area")?, area, "the area")?),
            "semi-axes-squared" => {
                Rule::SemiAxesSquared(self.size(value("semi_axes_squared")?, area, "a² + b²")?)
            }
            "semi-major" => {
                Rule::SemiMajor(self.size(value("semi_major")?, scale, "the semi-major axis")?)
            }
            "semi-minor" => {
                Rule::SemiMinor(self.size(value("semi_minor")?, scale, "the semi-minor axis")?)
            }
            "centre-near" => {
                let e = value("centre")?;
                Rule::CentreNear(self.point_of(e, e.value, scale)?)
            }
            other => {
                return Err(self.error(
                    Some(line),
                    Some("rule"),
                    Kind::BadValue,
                    format!("{what}: the rule \"{other}\" is not known"),
                ));
            }
        };
        Ok(FeatureSource::Bay { select, rule })
    }

    fn constraints_source(
        &self,
        entries: &Entries<'_, '_>,
        what: &str,
        scale: f64,
    ) -> Result<FeatureSource, JobFileError> {
        self.refuse_foreign(
            entries,
            &BAY_ONLY,
            &format!(
                "belongs to bay features; {what} is fixed by its five points and lines \
                 (`through`, `touching`), so it takes no rule, rule value or margin. Remove it, \
                 and use `choose` to pick among several solutions"
            ),
        )?;
        self.refuse_both(
            entries,
            "through",
            "through_layer",
            &format!("the points of {what}"),
        )?;
        self.refuse_both(
            entries,
            "touching",
            "touching_layer",
            &format!("the lines of {what}"),
        )?;
        let through = match (entries.get("through"), entries.get("through_layer")) {
            (Some(e), _) => PointSource::Given(self.points(e, scale)?),
            (None, Some(e)) => PointSource::Layer(self.string(e)?),
            (None, None) => PointSource::Given(Vec::new()),
        };
        let touching = match (entries.get("touching"), entries.get("touching_layer")) {
            (Some(e), _) => LineSource::Given(self.lines(e, scale)?),
            (None, Some(e)) => LineSource::Layer(self.string(e)?),
            (None, None) => LineSource::Given(Vec::new()),
        };
        // Five constraints in all (what the file itself gives must leave room for the layers).
        let Some(count_entry) = entries
            .list
            .iter()
            .rfind(|e| e.key == "through" || e.key == "touching")
            .or_else(|| entries.first_of(&CONSTRAINT_SOURCE))
        else {
            return Err(self.no_source(what, "`through` or `touching`"));
        };
        match (&through, &touching) {
            (PointSource::Given(p), LineSource::Given(t))
                if p.len() + t.len() != CONSTRAINT_COUNT =>
            {
                return Err(self.at(
                    count_entry,
                    Kind::BadValue,
                    format!(
                        "{what} gives {} and {}: {} constraints, but a conic is fixed by exactly \
                         {CONSTRAINT_COUNT}; add or remove points (`through`) or lines \
                         (`touching`) so that they make {CONSTRAINT_COUNT}",
                        plural(p.len(), "point"),
                        plural(t.len(), "line"),
                        p.len() + t.len()
                    ),
                ));
            }
            (PointSource::Given(p), LineSource::Layer(_)) if p.len() >= CONSTRAINT_COUNT => {
                return Err(self.at(
                    count_entry,
                    Kind::BadValue,
                    format!(
                        "{what} gives {} and takes more lines from `touching_layer`, but a conic \
                         is fixed by exactly {CONSTRAINT_COUNT} points and lines; give at most {} \
                         points here",
                        plural(p.len(), "point"),
                        CONSTRAINT_COUNT - 1
                    ),
                ));
            }
            (PointSource::Layer(_), LineSource::Given(t)) if t.len() >= CONSTRAINT_COUNT => {
                return Err(self.at(
                    count_entry,
                    Kind::BadValue,
                    format!(
                        "{what} gives {} and takes more points from `through_layer`, but a conic \
                         is fixed by exactly {CONSTRAINT_COUNT} points and lines; give at most {} \
                         lines here",
                        plural(t.len(), "line"),
                        CONSTRAINT_COUNT - 1
                    ),
                ));
            }
            _ => {}
        }
        let choose = match entries.get("choose") {
            None => None,
            Some(e) => match e.value.get_ref() {
                DeValue::Integer(i) => {
                    match i64::from_str_radix(&i.as_str().replace('_', ""), i.radix()) {
                        Ok(v) if v >= 1 => Some(v as usize),
                        _ => {
                            return Err(self.at(
                                e,
                                Kind::BadValue,
                                format!(
                                    "`choose` is {}; it counts from 1 (the first solution as \
                                     `conicut solve` lists them)",
                                    i.as_str()
                                ),
                            ));
                        }
                    }
                }
                _ => return Err(self.wrong_type(e, e.value, "a whole number (1, 2, …)")),
            },
        };
        Ok(FeatureSource::Constraints {
            through,
            touching,
            choose,
        })
    }

    fn fit_source(
        &self,
        entries: &Entries<'_, '_>,
        what: &str,
    ) -> Result<FeatureSource, JobFileError> {
        let mut foreign: Vec<&str> = BAY_ONLY.to_vec();
        foreign.push("choose");
        self.refuse_foreign(
            entries,
            &foreign,
            &format!(
                "does not apply to {what}: a fitted ellipse is fixed by the measured points, so \
                 it takes no rule, rule value, margin or choice. Remove it"
            ),
        )?;
        self.refuse_both(
            entries,
            "fit_csv",
            "fit_layer",
            &format!("the points of {what}"),
        )?;
        let points = match (entries.get("fit_csv"), entries.get("fit_layer")) {
            (Some(e), _) => FitPoints::Csv(self.string(e)?),
            (None, Some(e)) => FitPoints::Layer(self.string(e)?),
            (None, None) => return Err(self.no_source(what, "`fit_csv` or `fit_layer`")),
        };
        Ok(FeatureSource::Fit { points })
    }
}

/// "a string", "an integer", …
fn with_article(noun: &str) -> String {
    if noun.starts_with(['a', 'e', 'i', 'o', 'u']) {
        format!("an {noun}")
    } else {
        format!("a {noun}")
    }
}

fn plural(n: usize, word: &str) -> String {
    if n == 1 {
        format!("1 {word}")
    } else {
        format!("{n} {word}s")
    }
}

/// The allowed key nearest to `key` when it is a likely misspelling (at most two edits, or the
/// American spelling of `centre`).
fn suggestion<'k>(key: &str, allowed: &[&'k str]) -> Option<&'k str> {
    let key = key.to_lowercase().replace('-', "_");
    if key == "center" && allowed.contains(&"centre") {
        return Some("centre");
    }
    allowed
        .iter()
        .map(|a| (edit_distance(&key, a), *a))
        .filter(|(d, _)| *d <= 2)
        .min_by_key(|(d, _)| *d)
        .map(|(_, a)| a)
}

/// Levenshtein distance between two short strings.
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut diagonal = row[0];
        row[0] = i + 1;
        for (j, &cb) in b.iter().enumerate() {
            let next = (row[j + 1] + 1)
                .min(row[j] + 1)
                .min(diagonal + usize::from(ca != cb));
            diagonal = row[j + 1];
            row[j + 1] = next;
        }
    }
    row[b.len()]
}
