//! Job files (`conicut::settings::job_file`): the bundled example, unit conversion, and every refusal naming
//! the right line and key.
//!
//! Sources: the schema is our own (documented in `src/settings/job_file/mod.rs`); the inch is exactly
//! 25.4 mm (international yard and pound agreement, 1959), so an area in in² is 645.16 mm²; the
//! demo drawing's bays and layer are those of `src/demo/mod.rs`.

use conicut::geom::Point;
use conicut::plan::LeadKind;
use conicut::read::Units;
use conicut::settings::job_file::{
    BaySelect, CutKind, FeatureSource, FeatureSpec, FitMethod, FitPoints, JobFile, JobFileError,
    JobFileErrorKind as Kind, LeadSpec, LineSource, PointSource, Rule, parse_job_file,
};

const EXAMPLE: &str = include_str!("../demo-parts/truss-bracket-job.toml");

/// The job text made of `lines`, so that line `i + 1` of the file is `lines[i]`.
fn text(lines: &[&str]) -> String {
    lines.join("\n") + "\n"
}

fn parse(lines: &[&str]) -> Result<JobFile, JobFileError> {
    parse_job_file(&text(lines), "job.toml")
}

fn refusal(lines: &[&str]) -> JobFileError {
    match parse(lines) {
        Ok(job) => panic!("expected a refusal, got {job:?}"),
        Err(e) => e,
    }
}

/// [`refusal`] of a job file in millimetres whose one feature, named "a", holds `lines`: its
/// first line is line 4 of the file.
fn feature_refusal(lines: &[&str]) -> JobFileError {
    let file: Vec<&str> = ["units = \"mm\"", "[[feature]]", "name = \"a\""]
        .into_iter()
        .chain(lines.iter().copied())
        .collect();
    refusal(&file)
}

/// Asserts the error's kind, line and key, and that its message names them.
fn assert_at(e: &JobFileError, kind: Kind, line: Option<usize>, key: Option<&str>) {
    assert_eq!(
        (e.kind, e.line, e.key.as_deref()),
        (kind, line, key),
        "wrong place or kind for: {e}"
    );
    let shown = e.to_string();
    assert!(shown.starts_with("job.toml"), "{shown}");
    if let Some(l) = line {
        assert!(shown.contains(&format!("line {l}")), "{shown}");
    }
    if let Some(k) = key {
        assert!(shown.contains(&format!("key `{k}`")), "{shown}");
    }
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * b.abs().max(1.0)
}

#[test]
fn example_file_parses_to_the_expected_specs() {
    let job = parse_job_file(EXAMPLE, "truss-bracket-job.toml").unwrap();
    // The feature header lines, found by reading the file's lines (not by the parser).
    let headers: Vec<usize> = EXAMPLE
        .lines()
        .enumerate()
        .filter(|(_, l)| l.trim() == "[[feature]]")
        .map(|(i, _)| i + 1)
        .collect();
    assert_eq!(headers.len(), 4);
    let feature = |i: usize, name: &str, source, cut, margin| FeatureSpec {
        name: name.to_string(),
        line: headers[i],
        source,
        cut,
        margin,
        depth: None,
        stepdown: None,
        feed: None,
        plunge_feed: None,
        spindle_speed: None,
    };
    let expected = JobFile {
        units: Units::Millimetres,
        margin: Some(4.0),
        bay_layer: Some("OPENING-BAYS".into()),
        cut_layers: None,
        skip_layers: None,
        feed: None,
        plunge_feed: None,
        spindle_speed: None,
        zero: None,
        work_offset: None,
        leads: LeadSpec::default(),
        features: vec![
            feature(
                0,
                "lightening hole 1",
                FeatureSource::Bay {
                    select: BaySelect::Name("bay 1".into()),
                    rule: Rule::Largest,
                },
                CutKind::Hole,
                None,
            ),
            feature(
                1,
                "vent 2",
                FeatureSource::Bay {
                    select: BaySelect::Inside(Point::new(96.0, 70.0)),
                    rule: Rule::Area(1500.0),
                },
                CutKind::Hole,
                Some(3.0),
            ),
            feature(
                2,
                "round hole 3",
                FeatureSource::Bay {
                    select: BaySelect::Name("bay 3".into()),
                    rule: Rule::Roundest,
                },
                CutKind::Hole,
                None,
            ),
            feature(
                3,
                "lightening hole 4",
                FeatureSource::Bay {
                    select: BaySelect::Name("bay 4".into()),
                    rule: Rule::CentreNear(Point::new(196.0, 70.0)),
                },
                CutKind::Hole,
                None,
            ),
        ],
    };
    assert_eq!(job, expected);
    assert_eq!(job.margin_for(&job.features[0]), Some(4.0));
    assert_eq!(job.margin_for(&job.features[1]), Some(3.0));
}

#[test]
fn example_file_refers_to_the_demo_drawing() {
    // src/demo/mod.rs: bays "bay 1" … "bay 4" on the default bay layer, corners in demo::BAYS.
    let job = parse_job_file(EXAMPLE, "truss-bracket-job.toml").unwrap();
    assert_eq!(
        job.bay_layer.as_deref(),
        Some(conicut::chain::DEFAULT_BAY_LAYER)
    );
    let bays = conicut::demo::BAYS;
    for f in &job.features {
        let FeatureSource::Bay { select, .. } = &f.source else {
            panic!("the example's features are all bays");
        };
        match select {
            BaySelect::Name(n) => {
                let k: usize = n.strip_prefix("bay ").unwrap().parse().unwrap();
                assert!((1..=bays.len()).contains(&k), "{n}");
            }
            BaySelect::Inside(p) => {
                // Inside exactly one bay: left of every counter-clockwise side.
                let inside: Vec<usize> = (0..bays.len())
                    .filter(|&b| {
                        (0..4).all(|i| {
                            let (a, c) = (bays[b][i], bays[b][(i + 1) % 4]);
                            (c.0 - a.0) * (p.y - a.1) - (c.1 - a.1) * (p.x - a.0) > 0.0
                        })
                    })
                    .collect();
                assert_eq!(inside, vec![1], "the point should lie in bay 2 only");
            }
        }
    }
}

#[test]
fn inch_values_are_converted_to_mm() {
    // 1 in = 25.4 mm exactly; areas and a² + b² by 25.4² = 645.16.
    let job = parse(&[
        "units = \"in\"",
        "margin = 0.25",
        "[[feature]]",
        "name = \"a\"",
        "bay = \"bay 1\"",
        "rule = \"area\"",
        "area = 2",
        "margin = 0.125",
        "[[feature]]",
        "name = \"b\"",
        "bay = \"bay 2\"",
        "rule = \"semi-axes-squared\"",
        "semi_axes_squared = 1.5",
        "[[feature]]",
        "name = \"c\"",
        "inside = [1.0, 2.0]",
        "rule = \"semi-major\"",
        "semi_major = 1.5",
        "[[feature]]",
        "name = \"d\"",
        "bay = \"bay 3\"",
        "rule = \"semi-minor\"",
        "semi_minor = 0.5",
        "[[feature]]",
        "name = \"e\"",
        "bay = \"bay 4\"",
        "rule = \"centre-near\"",
        "centre = [3.0, -1.0]",
        "[[feature]]",
        "name = \"f\"",
        "through = [[0, 0], [1, 0], [0.5, 0.5]]",
        "touching = [[[0, -0.25], [1, -0.25]], [[-1, 0], [-1, 1]]]",
    ])
    .unwrap();
    assert_eq!(job.units, Units::Inches);
    assert!(close(job.margin.unwrap(), 6.35));
    assert!(close(job.features[0].margin.unwrap(), 3.175));
    let rule = |i: usize| match &job.features[i].source {
        FeatureSource::Bay { rule, .. } => *rule,
        other => panic!("not a bay: {other:?}"),
    };
    assert!(matches!(rule(0), Rule::Area(v) if close(v, 2.0 * 645.16)));
    assert!(matches!(rule(1), Rule::SemiAxesSquared(v) if close(v, 1.5 * 645.16)));
    assert!(matches!(rule(2), Rule::SemiMajor(v) if close(v, 38.1)));
    assert!(matches!(rule(3), Rule::SemiMinor(v) if close(v, 12.7)));
    assert!(matches!(rule(4), Rule::CentreNear(p) if close(p.x, 76.2) && close(p.y, -25.4)));
    let FeatureSource::Bay {
        select: BaySelect::Inside(p),
        ..
    } = &job.features[2].source
    else {
        panic!("feature c is chosen by a point");
    };
    assert!(close(p.x, 25.4) && close(p.y, 50.8));
    let FeatureSource::Constraints {
        through: PointSource::Given(pts),
        touching: LineSource::Given(lines),
        choose: None,
    } = &job.features[5].source
    else {
        panic!("feature f has given constraints");
    };
    assert_eq!(pts.len(), 3);
    assert!(close(pts[2].x, 12.7) && close(pts[2].y, 12.7));
    assert_eq!(lines.len(), 2);
    assert!(close(lines[0].0.y, -6.35) && close(lines[1].1.x, -25.4));
}

#[test]
fn lead_keys_parse_in_the_file_units_and_bad_ones_are_refused() {
    // 1 in = 25.4 mm exactly.
    let job = parse(&[
        "units = \"in\"",
        "lead = \"line-arc\"",
        "lead_length = 0.1",
        "lead_radius = 0.05",
        "overcut = 0",
        "lead_out = false",
        "[[feature]]",
        "name = \"a\"",
        "bay = \"bay 1\"",
    ])
    .unwrap();
    assert_eq!(job.leads.shape, Some(LeadKind::LineArc));
    assert!(close(job.leads.length.unwrap(), 2.54));
    assert!(close(job.leads.radius.unwrap(), 1.27));
    assert_eq!(job.leads.overcut, Some(0.0));
    assert_eq!(job.leads.lead_out, Some(false));
    // Not given: left to the command line and the profile.
    let plain = parse(&[
        "units = \"mm\"",
        "[[feature]]",
        "name = \"a\"",
        "bay = \"bay 1\"",
    ]);
    assert_eq!(plain.unwrap().leads, LeadSpec::default());

    let feature = ["[[feature]]", "name = \"a\"", "bay = \"bay 1\""];
    for (line, key, kind) in [
        ("lead = \"spiral\"", "lead", Kind::BadValue),
        ("lead_length = -1", "lead_length", Kind::BadValue),
        ("lead_radius = 0", "lead_radius", Kind::BadValue),
        ("overcut = -0.5", "overcut", Kind::BadValue),
        ("lead_out = \"yes\"", "lead_out", Kind::WrongType),
    ] {
        let mut lines = vec!["units = \"mm\"", line];
        lines.extend(feature);
        assert_at(&refusal(&lines), kind, Some(2), Some(key));
    }
}

#[test]
fn constraint_and_fit_features_parse() {
    let job = parse(&[
        "units = \"mm\"",
        "[[feature]]",
        "name = \"probed oval\"",
        "through = [[0.0, 0.0], [10.0, 0.0], [5.0, 8.0]]",
        "touching = [[[0.0, -1.0], [10.0, -1.0]], [[-2, 0], [-2, 5]]]",
        "choose = 2",
        "cut = \"boss\"",
        "[[feature]]",
        "name = \"layered\"",
        "through_layer = \"PROBE\"",
        "touching_layer = \"GUIDES\"",
        "[[feature]]",
        "name = \"five points\"",
        "through = [[0, 0], [4, 0], [5, 3], [2, 5], [-1, 3]]",
        "[[feature]]",
        "name = \"scanned opening\"",
        "fit_csv = \"scan.csv\"",
        "cut = \"pocket\"",
        "[[feature]]",
        "name = \"scan layer\"",
        "fit_layer = \"SCAN\"",
    ])
    .unwrap();
    let f = &job.features;
    assert_eq!(
        f.iter().map(|f| f.line).collect::<Vec<_>>(),
        [2, 8, 12, 15, 19]
    );
    assert_eq!(
        f[0].source,
        FeatureSource::Constraints {
            through: PointSource::Given(vec![
                Point::new(0.0, 0.0),
                Point::new(10.0, 0.0),
                Point::new(5.0, 8.0)
            ]),
            touching: LineSource::Given(vec![
                (Point::new(0.0, -1.0), Point::new(10.0, -1.0)),
                (Point::new(-2.0, 0.0), Point::new(-2.0, 5.0)),
            ]),
            choose: Some(2),
        }
    );
    assert_eq!(f[0].cut, CutKind::Boss);
    assert_eq!(
        f[1].source,
        FeatureSource::Constraints {
            through: PointSource::Layer("PROBE".into()),
            touching: LineSource::Layer("GUIDES".into()),
            choose: None,
        }
    );
    assert!(matches!(
        &f[2].source,
        FeatureSource::Constraints { through: PointSource::Given(p), touching: LineSource::Given(t), .. }
            if p.len() == 5 && t.is_empty()
    ));
    assert_eq!(
        f[3].source,
        FeatureSource::Fit {
            points: FitPoints::Csv("scan.csv".into()),
            method: FitMethod::Geometric,
            reject_outliers: false,
        }
    );
    assert_eq!(f[3].cut, CutKind::Pocket);
    assert_eq!(
        f[4].source,
        FeatureSource::Fit {
            points: FitPoints::Layer("SCAN".into()),
            method: FitMethod::Geometric,
            reject_outliers: false,
        }
    );
    assert!(f.iter().all(|f| f.margin.is_none()));
    assert_eq!(job.margin, None);
    assert_eq!(job.bay_layer, None);
}

// ---- refusals: each names the line and the key ----

#[test]
fn missing_units_is_refused() {
    let e = refusal(&[
        "margin = 4",
        "[[feature]]",
        "name = \"a\"",
        "bay = \"bay 1\"",
    ]);
    assert_at(&e, Kind::Missing, None, Some("units"));
    assert!(e.message.contains("units = \"mm\""), "{e}");
}

#[test]
fn unknown_unit_is_refused() {
    let e = refusal(&[
        "units = \"furlong\"",
        "[[feature]]",
        "name = \"a\"",
        "bay = \"b\"",
    ]);
    assert_at(&e, Kind::BadValue, Some(1), Some("units"));
}

#[test]
fn unknown_keys_are_refused() {
    let e = refusal(&[
        "units = \"mm\"",
        "tolerance = 0.1",
        "[[feature]]",
        "name = \"a\"",
    ]);
    assert_at(&e, Kind::UnknownKey, Some(2), Some("tolerance"));
    let e = feature_refusal(&[
        "bay = \"bay 1\"",
        "rule = \"centre-near\"",
        "center = [1, 2]",
    ]);
    assert_at(&e, Kind::UnknownKey, Some(6), Some("center"));
    assert!(e.message.contains("did you mean `centre`"), "{e}");
    let e = feature_refusal(&["bay = \"bay 1\"", "rule = \"area\"", "aera = 5"]);
    assert_at(&e, Kind::UnknownKey, Some(6), Some("aera"));
    assert!(e.message.contains("did you mean `area`"), "{e}");
}

#[test]
fn wrong_types_are_refused() {
    let e = feature_refusal(&["bay = \"bay 1\"", "rule = \"area\"", "area = \"900\""]);
    assert_at(&e, Kind::WrongType, Some(6), Some("area"));
    assert!(
        e.message
            .contains("expected a number but found a string; write the number without quotes"),
        "{e}"
    );
    let e = feature_refusal(&["bay = 2"]);
    assert_at(&e, Kind::WrongType, Some(4), Some("bay"));
    let e = refusal(&["units = 25.4", "[[feature]]", "name = \"a\"", "bay = \"b\""]);
    assert_at(&e, Kind::WrongType, Some(1), Some("units"));
    let e = refusal(&["units = \"mm\"", "[feature]", "name = \"a\"", "bay = \"b\""]);
    assert_eq!(
        (e.kind, e.key.as_deref()),
        (Kind::WrongType, Some("feature"))
    );
    assert!(e.message.contains("[[feature]]"), "{e}");
    let e = feature_refusal(&[
        "through = [[0, 0], [1, 0], [0, 1]]",
        "touching = [[[0, -1], [1, -1]], [[-1, 0], [-1, 1]]]",
        "choose = 1.5",
    ]);
    assert_at(&e, Kind::WrongType, Some(6), Some("choose"));
}

#[test]
fn an_element_error_names_its_own_line() {
    // A list written over several lines: the bad line, not the key's, is named.
    let e = feature_refusal(&[
        "through = [[0, 0], [1, 0], [0, 1]]",
        "touching = [",
        "  [[0, -1], [1, -1]],",
        "  [[2, 2], [2, 2]],",
        "]",
    ]);
    assert_at(&e, Kind::BadValue, Some(7), Some("touching"));
    assert!(e.message.contains("same point"), "{e}");
    let e = feature_refusal(&["inside = [1, 2, 3]"]);
    assert_at(&e, Kind::BadValue, Some(4), Some("inside"));
}

#[test]
fn missing_name_and_missing_source_are_refused_at_the_feature() {
    let e = refusal(&["units = \"mm\"", "", "[[feature]]", "bay = \"bay 1\""]);
    assert_at(&e, Kind::Missing, Some(3), Some("name"));
    let e = feature_refusal(&["cut = \"hole\""]);
    assert_at(&e, Kind::Missing, Some(2), None);
    assert!(e.message.contains("`bay` or `inside`"), "{e}");
    let e = refusal(&["units = \"mm\""]);
    assert_at(&e, Kind::Missing, None, Some("feature"));
}

#[test]
fn duplicate_names_are_refused() {
    let e = refusal(&[
        "units = \"mm\"",
        "[[feature]]",
        "name = \"Vent\"",
        "bay = \"bay 1\"",
        "[[feature]]",
        "bay = \"bay 2\"",
        "name = \"vent\"",
    ]);
    assert_at(&e, Kind::Duplicate, Some(7), Some("name"));
    assert!(e.message.contains("line 3"), "{e}");
}

#[test]
fn two_sources_are_refused() {
    let e = feature_refusal(&["bay = \"bay 1\"", "inside = [1, 2]"]);
    assert_at(&e, Kind::Conflict, Some(5), Some("inside"));
    let e = feature_refusal(&["fit_csv = \"scan.csv\"", "bay = \"bay 1\""]);
    assert_at(&e, Kind::Conflict, Some(5), Some("bay"));
    assert!(e.message.contains("`fit_csv` (line 4)"), "{e}");
    let e = feature_refusal(&[
        "through_layer = \"P\"",
        "touching = [[[0, 0], [1, 0]]]",
        "through = [[0, 1], [1, 1], [2, 3], [4, 4]]",
    ]);
    assert_at(&e, Kind::Conflict, Some(6), Some("through"));
    let e = feature_refusal(&["fit_layer = \"SCAN\"", "fit_csv = \"scan.csv\""]);
    assert_at(&e, Kind::Conflict, Some(5), Some("fit_csv"));
}

#[test]
fn a_value_key_of_another_rule_is_refused() {
    let e = feature_refusal(&["bay = \"bay 1\"", "rule = \"roundest\"", "area = 900"]);
    assert_at(&e, Kind::Conflict, Some(6), Some("area"));
    assert!(e.message.contains("rule = \"area\""), "{e}");
    // No rule means "largest", which takes no value.
    let e = feature_refusal(&["bay = \"bay 1\"", "semi_minor = 12"]);
    assert_at(&e, Kind::Conflict, Some(5), Some("semi_minor"));
}

#[test]
fn a_missing_rule_value_is_refused_at_the_rule() {
    let e = feature_refusal(&["bay = \"bay 1\"", "rule = \"semi-major\""]);
    assert_at(&e, Kind::Missing, Some(5), Some("semi_major"));
    let e = feature_refusal(&["bay = \"bay 1\"", "rule = \"biggest\""]);
    assert_at(&e, Kind::BadValue, Some(5), Some("rule"));
    assert!(e.message.contains("\"largest-inside\""), "{e}");
}

#[test]
fn non_positive_sizes_and_negative_margins_are_refused() {
    for (key, rule, value) in [
        ("area", "area", "-900"),
        ("semi_axes_squared", "semi-axes-squared", "0"),
        ("semi_major", "semi-major", "0.0"),
        ("semi_minor", "semi-minor", "-1"),
        ("area", "area", "nan"),
    ] {
        let rule_line = format!("rule = \"{rule}\"");
        let value_line = format!("{key} = {value}");
        let e = feature_refusal(&["bay = \"bay 1\"", &rule_line, &value_line]);
        assert_at(&e, Kind::BadValue, Some(6), Some(key));
    }
    let e = refusal(&[
        "units = \"mm\"",
        "margin = -1",
        "[[feature]]",
        "name = \"a\"",
        "bay = \"b\"",
    ]);
    assert_at(&e, Kind::BadValue, Some(2), Some("margin"));
    let e = feature_refusal(&["bay = \"b\"", "margin = -0.5"]);
    assert_at(&e, Kind::BadValue, Some(5), Some("margin"));
}

#[test]
fn keys_of_other_feature_kinds_are_refused() {
    // A rule on a constraints feature.
    let e = feature_refusal(&[
        "through = [[0, 0], [1, 0], [0, 1]]",
        "touching = [[[0, -1], [1, -1]], [[-1, 0], [-1, 1]]]",
        "rule = \"largest\"",
    ]);
    assert_at(&e, Kind::Conflict, Some(6), Some("rule"));
    // A margin on a fit feature.
    let e = feature_refusal(&["fit_csv = \"s.csv\"", "margin = 2"]);
    assert_at(&e, Kind::Conflict, Some(5), Some("margin"));
    // `choose` on a bay feature.
    let e = feature_refusal(&["bay = \"bay 1\"", "choose = 1"]);
    assert_at(&e, Kind::Conflict, Some(5), Some("choose"));
}

#[test]
fn constraints_must_number_five() {
    let e = feature_refusal(&[
        "through = [[0, 0], [1, 0], [0, 1]]",
        "touching = [[[0, -1], [1, -1]]]",
    ]);
    assert_at(&e, Kind::BadValue, Some(5), Some("touching"));
    assert!(
        e.message.contains("3 points and 1 line: 4 constraints"),
        "{e}"
    );
    let e = feature_refusal(&[
        "touching_layer = \"GUIDES\"",
        "through = [[0, 0], [1, 0], [0, 1], [2, 2], [3, 1]]",
    ]);
    assert_at(&e, Kind::BadValue, Some(5), Some("through"));
    let e = feature_refusal(&[
        "through = [[0, 0], [4, 0], [5, 3], [2, 5], [-1, 3]]",
        "choose = 0",
    ]);
    assert_at(&e, Kind::BadValue, Some(5), Some("choose"));
}

#[test]
fn bad_words_are_refused() {
    let e = feature_refusal(&["bay = \"b\"", "cut = \"drill\""]);
    assert_at(&e, Kind::BadValue, Some(5), Some("cut"));
    let e = refusal(&[
        "units = \"mm\"",
        "[[feature]]",
        "name = \"  \"",
        "bay = \"b\"",
    ]);
    assert_at(&e, Kind::BadValue, Some(3), Some("name"));
}

#[test]
fn a_syntax_error_names_its_line() {
    let e = refusal(&["units = \"mm\"", "[[feature]]", "name = \"a", "bay = \"b\""]);
    assert_eq!(
        (e.kind, e.line, e.key.as_deref()),
        (Kind::Syntax, Some(3), None)
    );
    let e = refusal(&["units = \"mm\"", "units = \"in\""]);
    assert_eq!((e.kind, e.line), (Kind::Syntax, Some(2)));
}

#[test]
fn a_fit_chooses_its_method_and_outlier_rejection() {
    let text = "units = \"mm\"\n[[feature]]\nname = \"a\"\nfit_csv = \"s.csv\"\nfit = \"algebraic\"\n\n\
                [[feature]]\nname = \"b\"\nfit_layer = \"SCAN\"\nreject_outliers = true\n";
    let job = parse_job_file(text, "job.toml").unwrap();
    assert_eq!(
        job.features[0].source,
        FeatureSource::Fit {
            points: FitPoints::Csv("s.csv".into()),
            method: FitMethod::Algebraic,
            reject_outliers: false,
        }
    );
    assert_eq!(
        job.features[1].source,
        FeatureSource::Fit {
            points: FitPoints::Layer("SCAN".into()),
            method: FitMethod::Geometric,
            reject_outliers: true,
        }
    );
    let e = feature_refusal(&["fit_csv = \"s.csv\"", "fit = \"best\""]);
    assert_at(&e, Kind::BadValue, Some(5), Some("fit"));
    assert!(
        e.message.contains("\"geometric\"") && e.message.contains("\"algebraic\""),
        "{e}"
    );
    let e = feature_refusal(&[
        "fit_csv = \"s.csv\"",
        "fit = \"algebraic\"",
        "reject_outliers = true",
    ]);
    assert_at(&e, Kind::Conflict, Some(6), Some("reject_outliers"));
    let e = feature_refusal(&["bay = \"bay 1\"", "fit = \"geometric\""]);
    assert_at(&e, Kind::Conflict, Some(5), Some("fit"));
    let e = feature_refusal(&[
        "through = [[0, 1], [1, 1], [2, 3], [4, 4], [5, 0]]",
        "reject_outliers = true",
    ]);
    assert_at(&e, Kind::Conflict, Some(5), Some("reject_outliers"));
    let e = feature_refusal(&["fit_csv = \"s.csv\"", "reject_outliers = \"yes\""]);
    assert_eq!(e.key.as_deref(), Some("reject_outliers"), "{e}");
}
