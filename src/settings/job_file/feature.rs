//! One `[[feature]]` table: its name, cut and the one source of its ellipse (a bay and a rule,
//! five points and lines, or measured points).

use super::context::{Context, Entries, Entry, plural};
use super::keys::{
    BAY_ONLY, BAY_SOURCE, CONSTRAINT_COUNT, CONSTRAINT_SOURCE, FEATURE_KEYS, FIT_ONLY, FIT_SOURCE,
    RULES,
};
use super::{
    BaySelect, CutKind, FeatureSource, FeatureSpec, FitMethod, FitPoints, JobFileError,
    JobFileErrorKind as Kind, LineSource, PointSource, Rule,
};
use toml::de::{DeTable, DeValue};

impl Context<'_> {
    /// One `[[feature]]` table whose header is on `line`; returns the spec and the line of its
    /// name.
    pub(super) fn feature(
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
        let chars = name.chars().count();
        if chars > super::MAX_NAME_CHARS {
            return Err(self.at(
                name_entry,
                Kind::BadValue,
                format!(
                    "the name is {chars} characters long; give one of at most {} (it heads the \
                     feature's cut in the program, on one line)",
                    super::MAX_NAME_CHARS
                ),
            ));
        }
        let cut = self.cut_kind(&entries)?;

        let source = self.source(line, &entries, &name, scale)?;
        let margin = match &source {
            FeatureSource::Bay { .. } => entries
                .get("margin")
                .map(|e| self.margin(e, scale))
                .transpose()?,
            _ => None,
        };
        let depth = entries
            .get("depth")
            .map(|e| self.size(e, scale, "the depth"))
            .transpose()?;
        let stepdown = entries
            .get("stepdown")
            .map(|e| {
                let step = self.size(e, scale, "the stepdown")?;
                let least = crate::settings::ranges::MIN_STEPDOWN_MM;
                if step < least {
                    return Err(self.at(
                        e,
                        Kind::BadValue,
                        format!(
                            "the stepdown is {step} mm: passes that thin cut nothing a machine can hold and would take without end; give at least {least} mm"
                        ),
                    ));
                }
                Ok(step)
            })
            .transpose()?;
        let feed = entries
            .get("feed")
            .map(|e| self.size(e, scale, "the feed"))
            .transpose()?;
        let plunge_feed = entries
            .get("plunge_feed")
            .map(|e| self.size(e, scale, "the plunge feed"))
            .transpose()?;
        let spindle_speed = entries
            .get("spindle_speed")
            .map(|e| self.size(e, 1.0, "the spindle speed"))
            .transpose()?;
        Ok((
            FeatureSpec {
                name,
                line,
                source,
                cut,
                margin,
                depth,
                stepdown,
                feed,
                plunge_feed,
                spindle_speed,
            },
            name_entry.line,
        ))
    }

    /// `cut`: hole (the default), boss or pocket.
    fn cut_kind(&self, entries: &Entries<'_, '_>) -> Result<CutKind, JobFileError> {
        Ok(match entries.get("cut") {
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
        })
    }

    /// The one source of the feature's ellipse: a bay, constraints or a fit.
    fn source(
        &self,
        line: usize,
        entries: &Entries<'_, '_>,
        name: &str,
        scale: f64,
    ) -> Result<FeatureSource, JobFileError> {
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
        Ok(if groups[0].is_some() {
            self.bay_source(line, entries, &what, scale)?
        } else if groups[1].is_some() {
            self.constraints_source(entries, &what, scale)?
        } else if groups[2].is_some() {
            self.fit_source(entries, &what)?
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
        })
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
        self.refuse_foreign(
            entries,
            &FIT_ONLY,
            &format!(
                "belongs to fit features (`fit_csv`, `fit_layer`); {what} is a bay feature. \
                 Remove it"
            ),
        )?;
        self.refuse_both(entries, "bay", "inside", &format!("the bay of {what}"))?;
        let select = match (entries.get("bay"), entries.get("inside")) {
            (Some(e), _) => BaySelect::Name(self.string(e)?),
            (None, Some(e)) => BaySelect::Inside(self.point_of(e, e.value, scale)?),
            (None, None) => return Err(self.no_source(what, "`bay` or `inside`")),
        };

        let rule = self.rule(line, entries, what, scale)?;
        Ok(FeatureSource::Bay { select, rule })
    }

    /// The bay feature's `rule` (default "largest") and its value, in mm (mm² for areas).
    fn rule(
        &self,
        line: usize,
        entries: &Entries<'_, '_>,
        what: &str,
        scale: f64,
    ) -> Result<Rule, JobFileError> {
        let (keyword, rule_line) = self.rule_keyword(line, entries)?;
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
        Ok(match keyword.as_str() {
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
        })
    }

    /// The rule's keyword and line; refuses an unknown rule and the value keys of other rules.
    fn rule_keyword(
        &self,
        line: usize,
        entries: &Entries<'_, '_>,
    ) -> Result<(String, usize), JobFileError> {
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
        Ok((keyword, rule_line))
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
        self.refuse_foreign(
            entries,
            &FIT_ONLY,
            &format!(
                "belongs to fit features (`fit_csv`, `fit_layer`); {what} passes exactly \
                 through its points, so there is nothing to fit. Remove it"
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
        self.check_constraint_count(entries, &through, &touching, what)?;
        let choose = self.choose(entries)?;
        Ok(FeatureSource::Constraints {
            through,
            touching,
            choose,
        })
    }

    /// Five constraints in all (what the file itself gives must leave room for the layers).
    fn check_constraint_count(
        &self,
        entries: &Entries<'_, '_>,
        through: &PointSource,
        touching: &LineSource,
        what: &str,
    ) -> Result<(), JobFileError> {
        let Some(count_entry) = entries
            .list
            .iter()
            .rfind(|e| e.key == "through" || e.key == "touching")
            .or_else(|| entries.first_of(&CONSTRAINT_SOURCE))
        else {
            return Err(self.no_source(what, "`through` or `touching`"));
        };
        match (through, touching) {
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
        Ok(())
    }

    /// `choose`: which solution (from 1) of a constraints feature to cut.
    fn choose(&self, entries: &Entries<'_, '_>) -> Result<Option<usize>, JobFileError> {
        Ok(match entries.get("choose") {
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
        let method = match entries.get("fit") {
            None => FitMethod::Geometric,
            Some(e) => match self.string(e)?.as_str() {
                "geometric" => FitMethod::Geometric,
                "algebraic" => FitMethod::Algebraic,
                other => {
                    return Err(self.at(
                        e,
                        Kind::BadValue,
                        format!(
                            "`fit = \"{other}\"` is not a fit; write \"geometric\" (the least \
                             sum of squared distances, the default) or \"algebraic\" (the \
                             direct fit)"
                        ),
                    ));
                }
            },
        };
        let reject_outliers = match entries.get("reject_outliers") {
            None => false,
            Some(e) => {
                let on = self.boolean(e)?;
                if on && method == FitMethod::Algebraic {
                    return Err(self.at(
                        e,
                        Kind::Conflict,
                        "`reject_outliers` applies to the geometric fit; with `fit = \
                         \"algebraic\"` remove it, or drop `fit` to use the geometric fit"
                            .into(),
                    ));
                }
                on
            }
        };
        Ok(FeatureSource::Fit {
            points,
            method,
            reject_outliers,
        })
    }
}
