//! The parsed TOML document with its spans: entries in file order, typed values converted to
//! mm, and errors that name the line and key.

use super::{JobFileError, JobFileErrorKind as Kind};
use crate::geom::Point;
use crate::plan::{LeadKind, WorkZero, ZERO_WORDS};
use crate::post::WorkOffset;
use crate::settings::toml_text::LineIndex;
use toml::Spanned;
use toml::de::{DeTable, DeValue};

/// The text being parsed, for line numbers and messages.
pub(super) struct Context<'t> {
    file: &'t str,
    /// Where each line starts.
    lines: LineIndex,
}

/// One key of a table with its value and the line the key is on.
pub(super) struct Entry<'a, 'i> {
    pub(super) key: &'a str,
    pub(super) line: usize,
    pub(super) value: &'a Spanned<DeValue<'i>>,
}

/// A table's entries in the order of the file.
pub(super) struct Entries<'a, 'i> {
    pub(super) list: Vec<Entry<'a, 'i>>,
}

impl<'a, 'i> Entries<'a, 'i> {
    pub(super) fn new(cx: &Context<'_>, table: &'a DeTable<'i>) -> Self {
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

    pub(super) fn get(&self, key: &str) -> Option<&Entry<'a, 'i>> {
        self.list.iter().find(|e| e.key == key)
    }

    /// The first (by line) of `keys` present.
    pub(super) fn first_of(&self, keys: &[&str]) -> Option<&Entry<'a, 'i>> {
        self.list.iter().find(|e| keys.contains(&e.key))
    }
}

impl<'t> Context<'t> {
    pub(super) fn new(text: &'t str, file: &'t str) -> Self {
        Context {
            file,
            lines: LineIndex::new(text),
        }
    }

    /// The 1-based line holding byte `offset`.
    pub(super) fn line(&self, offset: usize) -> usize {
        self.lines.line(offset)
    }

    pub(super) fn error(
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
    pub(super) fn no_source(&self, what: &str, keys: &str) -> JobFileError {
        self.error(None, None, Kind::Missing, format!("{what} needs {keys}"))
    }

    /// An error at an entry's key.
    pub(super) fn at(&self, e: &Entry<'_, '_>, kind: Kind, message: String) -> JobFileError {
        self.error(Some(e.line), Some(e.key), kind, message)
    }

    /// An error at one element of an entry's value (its own line, for lists over several lines).
    pub(super) fn at_item(
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

    pub(super) fn syntax(&self, e: &toml::de::Error) -> JobFileError {
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

    pub(super) fn unknown_key(
        &self,
        e: &Entry<'_, '_>,
        allowed: &[&str],
        place: &str,
    ) -> JobFileError {
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

    pub(super) fn wrong_type(
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
    pub(super) fn string(&self, e: &Entry<'_, '_>) -> Result<String, JobFileError> {
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
    pub(super) fn number_of(
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
    pub(super) fn not_negative(
        &self,
        e: &Entry<'_, '_>,
        scale: f64,
        what: &str,
    ) -> Result<f64, JobFileError> {
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
    pub(super) fn boolean(&self, e: &Entry<'_, '_>) -> Result<bool, JobFileError> {
        match e.value.get_ref() {
            DeValue::Boolean(b) => Ok(*b),
            _ => Err(self.wrong_type(e, e.value, "true or false")),
        }
    }

    /// A lead shape by name.
    pub(super) fn lead_shape(&self, e: &Entry<'_, '_>) -> Result<LeadKind, JobFileError> {
        let word = self.string(e)?;
        word.parse::<LeadKind>().map_err(|bad| {
            self.at(
                e,
                Kind::BadValue,
                format!("unknown lead shape \"{word}\"; use {}", bad.allowed),
            )
        })
    }

    /// A work zero: a word (`"lower-left"`, …) or a drawing point `[x, y]` in the file's unit.
    pub(super) fn work_zero(
        &self,
        e: &Entry<'_, '_>,
        scale: f64,
    ) -> Result<WorkZero, JobFileError> {
        if let DeValue::Array(_) = e.value.get_ref() {
            let p = self.point_of(e, e.value, scale)?;
            return Ok(WorkZero::At { x: p.x, y: p.y });
        }
        let word = self.string(e)?;
        if word.contains(',') {
            return Err(self.at(
                e,
                Kind::BadValue,
                format!(
                    "the work zero \"{word}\" looks like a point; in a job file write a point as \
                     a list in the file's unit, `zero = [x, y]`"
                ),
            ));
        }
        word.parse::<WorkZero>().map_err(|_| {
            self.at(
                e,
                Kind::BadValue,
                format!(
                    "unknown work zero \"{word}\"; use {} in quotes, or a drawing point `[x, y]`",
                    ZERO_WORDS.map(|(w, _)| format!("\"{w}\"")).join(", ")
                ),
            )
        })
    }

    /// A list of layer names, `["A", "B"]`, each non-empty text.
    pub(super) fn layer_names(&self, e: &Entry<'_, '_>) -> Result<Vec<String>, JobFileError> {
        self.list_of(
            e,
            "a list of layer names in quotes, `[\"A\", \"B\"]`",
            |v| match v.get_ref() {
                DeValue::String(s) if !s.trim().is_empty() => Ok(s.trim().to_string()),
                _ => Err(self.at_item(
                    e,
                    v,
                    Kind::BadValue,
                    "each layer is a name in quotes, such as \"PLATE\"".into(),
                )),
            },
        )
    }

    /// A work offset, `"G54"` to `"G59"`.
    pub(super) fn work_offset(&self, e: &Entry<'_, '_>) -> Result<WorkOffset, JobFileError> {
        let word = self.string(e)?;
        word.parse::<WorkOffset>().map_err(|bad| {
            self.at(
                e,
                Kind::BadValue,
                format!("unknown work offset \"{word}\"; use {}", bad.allowed),
            )
        })
    }

    /// A margin: zero or positive, converted to mm.
    pub(super) fn margin(&self, e: &Entry<'_, '_>, scale: f64) -> Result<f64, JobFileError> {
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
    pub(super) fn size(
        &self,
        e: &Entry<'_, '_>,
        factor: f64,
        what: &str,
    ) -> Result<f64, JobFileError> {
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
    pub(super) fn point_of(
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
    pub(super) fn list_of<T>(
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
    pub(super) fn points(&self, e: &Entry<'_, '_>, scale: f64) -> Result<Vec<Point>, JobFileError> {
        self.list_of(e, "a list of points `[[x, y], …]`", |v| {
            self.point_of(e, v, scale)
        })
    }

    /// `[[[x1, y1], [x2, y2]], …]`: lines by two distinct points, converted to mm.
    pub(super) fn lines(
        &self,
        e: &Entry<'_, '_>,
        scale: f64,
    ) -> Result<Vec<(Point, Point)>, JobFileError> {
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
}

/// "a string", "an integer", …
pub(super) fn with_article(noun: &str) -> String {
    if noun.starts_with(['a', 'e', 'i', 'o', 'u']) {
        format!("an {noun}")
    } else {
        format!("a {noun}")
    }
}

pub(super) fn plural(n: usize, word: &str) -> String {
    if n == 1 {
        format!("1 {word}")
    } else {
        format!("{n} {word}s")
    }
}

/// The allowed key nearest to `key` when it is a likely misspelling (at most two edits, or the
/// American spelling of `centre`).
pub(super) fn suggestion<'k>(key: &str, allowed: &[&'k str]) -> Option<&'k str> {
    let key = key.to_lowercase().replace('-', "_");
    if key == "centre" && allowed.contains(&"centre") {
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
pub(super) fn edit_distance(a: &str, b: &str) -> usize {
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
