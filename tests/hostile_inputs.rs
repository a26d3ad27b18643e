//! A catalogue of bad inputs, each given to `conicut plan` as a user would: every one is
//! refused with a message that says what is wrong in the user's words (the setting, file, line
//! or feature, and what to give instead), never as an internal error, and the output folder is
//! left as it was (here: an earlier run's set, byte for byte).

use assert_cmd::Command;
use std::collections::BTreeMap;
use std::fs;
use std::path::{Path, PathBuf};

fn demo_drawing() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-parts/truss-bracket.dxf")
}

fn profile_text(stem: &str) -> String {
    fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join(format!("machine-profiles/{stem}.toml")),
    )
    .unwrap()
}

fn files(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    fs::read_dir(dir)
        .unwrap()
        .filter_map(|e| e.ok())
        .map(|e| {
            (
                e.file_name().to_string_lossy().into_owned(),
                fs::read(e.path()).unwrap_or_default(),
            )
        })
        .collect()
}

/// One bad input: a name, the drawing (a path, or the bytes of a drawing to write), the
/// arguments after it, and words the message must hold.
struct Case {
    name: &'static str,
    drawing: Option<Vec<u8>>,
    args: Vec<String>,
    says: &'static [&'static str],
}

fn args(a: &str) -> Vec<String> {
    a.split_whitespace().map(str::to_string).collect()
}

fn option(name: &'static str, a: &str, says: &'static [&'static str]) -> Case {
    Case {
        name,
        drawing: None,
        args: args(&format!("--machine metric-mill {a}")),
        says,
    }
}

/// The demo drawing with every coordinate and radius of its entities (group codes 10, 20, 11,
/// 21, 40 in the ENTITIES section) multiplied by `factor`.
fn scaled_demo(factor: f64) -> Vec<u8> {
    let text = fs::read_to_string(demo_drawing()).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    let mut out = Vec::with_capacity(lines.len());
    let mut in_entities = false;
    for pair in lines.chunks(2) {
        let (code, value) = (pair[0], pair.get(1).copied().unwrap_or(""));
        if code.trim() == "2" && value.trim() == "ENTITIES" {
            in_entities = true;
        }
        if code.trim() == "0" && value.trim() == "ENDSEC" {
            in_entities = false;
        }
        out.push(code.to_string());
        let scaled = matches!(code.trim(), "10" | "20" | "11" | "21" | "40") && in_entities;
        out.push(match value.trim().parse::<f64>() {
            Ok(v) if scaled => format!("{:e}", v * factor),
            _ => value.to_string(),
        });
    }
    (out.join("\n") + "\n").into_bytes()
}

/// The demo drawing with `entities` (DXF text) added at the end of its ENTITIES section.
fn demo_with(entities: &str) -> Vec<u8> {
    let text = fs::read_to_string(demo_drawing())
        .unwrap()
        .replace("\r\n", "\n");
    let start = text.find("ENTITIES").unwrap();
    let end = start + text[start..].find("  0\nENDSEC").unwrap();
    format!("{}{entities}{}", &text[..end], &text[end..]).into_bytes()
}

/// A closed LWPOLYLINE bay on the bay layer through `corners`.
fn bay(handle: &str, corners: &[(f64, f64)]) -> String {
    let mut s = format!(
        "  0\nLWPOLYLINE\n  5\n{handle}\n  8\nOPENING-BAYS\n 90\n{}\n 70\n1\n",
        corners.len()
    );
    for (x, y) in corners {
        s.push_str(&format!(" 10\n{x}\n 20\n{y}\n"));
    }
    s
}

/// A copy of the demo's first bay (the LWPOLYLINE with handle 14) under handle `handle`.
fn first_bay_again(handle: &str) -> String {
    let text = fs::read_to_string(demo_drawing())
        .unwrap()
        .replace("\r\n", "\n");
    let start = text
        .find("  0\nLWPOLYLINE\n  5\n14\n")
        .expect("the first bay");
    let end = start + 1 + text[start + 1..].find("\n  0\n").unwrap() + 1;
    let copy = &text[start..end];
    assert!(copy.contains("OPENING-BAYS"), "{copy}");
    copy.replacen("  5\n14\n", &format!("  5\n{handle}\n"), 1)
}

/// A copy of the demo's first fixing hole (the CIRCLE with handle 1E) under handle `handle`.
fn first_circle_again(handle: &str) -> String {
    let text = fs::read_to_string(demo_drawing())
        .unwrap()
        .replace("\r\n", "\n");
    let start = text
        .find("  0\nCIRCLE\n  5\n1E\n")
        .expect("the first circle");
    let end = start + 1 + text[start + 1..].find("\n  0\n").unwrap() + 1;
    text[start..end].replacen("  5\n1E\n", &format!("  5\n{handle}\n"), 1)
}

/// The demo's job file with its first hole renamed `name`, written into `tmp`; its path.
fn job_with_name(tmp: &Path, file: &str, name: &str) -> String {
    let job = fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-parts/truss-bracket-job.toml"),
    )
    .unwrap();
    let from = "name = \"lightening hole 1\"";
    assert!(job.contains(from));
    let path = tmp.join(format!("{file}.toml"));
    fs::write(&path, job.replacen(from, &format!("name = \"{name}\""), 1)).unwrap();
    path.display().to_string()
}

/// A job file holding `features` (TOML `[[feature]]` tables) written into `tmp` as `file`; its
/// path.
fn job(tmp: &Path, file: &str, features: &str) -> String {
    let path = tmp.join(format!("{file}.toml"));
    fs::write(&path, format!("units = \"mm\"\n\n{features}")).unwrap();
    path.display().to_string()
}

/// A CSV of points written into `tmp`; its path.
fn csv(tmp: &Path, file: &str, text: &str) -> String {
    let path = tmp.join(format!("{file}.csv"));
    fs::write(&path, text).unwrap();
    path.display().to_string()
}

fn with_job(name: &'static str, job_path: String, says: &'static [&'static str]) -> Case {
    Case {
        name,
        drawing: None,
        args: args(&format!(
            "--machine metric-mill --tool-diameter 6 --job {job_path}"
        )),
        says,
    }
}

fn on_drawing(name: &'static str, drawing: Vec<u8>, says: &'static [&'static str]) -> Case {
    Case {
        name,
        drawing: Some(drawing),
        args: args("--machine metric-mill --tool-diameter 6"),
        says,
    }
}

/// A LINE on the plate's layer from (x0, y0) to (x1, y1), written as given.
fn line(x0: &str, y0: &str, x1: &str, y1: &str) -> String {
    format!("  0\nLINE\n  5\nFFF3\n  8\nPLATE-EDGE\n 10\n{x0}\n 20\n{y0}\n 11\n{x1}\n 21\n{y1}\n")
}

fn cases(tmp: &Path) -> Vec<Case> {
    let mill = profile_text("metric-mill");
    let profile = |name: &str, from: &str, to: &str| -> String {
        assert!(mill.contains(from), "{from}");
        let path = tmp.join(format!("{name}.toml"));
        fs::write(&path, mill.replacen(from, to, 1)).unwrap();
        path.display().to_string()
    };
    let demo = fs::read(demo_drawing()).unwrap();
    let truncated = demo[..demo.len() / 2].to_vec();
    let mut out = vec![
        // Absurd numbers on the command line.
        option(
            "stepdown 1e-9",
            "--tool-diameter 6 --depth 3 --stepdown 1e-9",
            &["stepdown", "at least 0.01 mm"],
        ),
        option(
            "stepdown 0.001",
            "--tool-diameter 6 --depth 3 --stepdown 0.001",
            &["stepdown", "at least 0.01 mm"],
        ),
        option(
            "a million tabs",
            "--tool-diameter 6 --tabs 1000000",
            &["1000000 tabs", "give fewer"],
        ),
        option(
            "tab spacing 1e-6",
            "--tool-diameter 6 --tab-spacing 1e-6",
            &["spacing", "at least 1 mm"],
        ),
        option(
            "negative tolerance",
            "--tool-diameter 6 --tolerance -1",
            &["tolerance", "above zero"],
        ),
        option(
            "zero tolerance",
            "--tool-diameter 6 --tolerance 0",
            &["tolerance", "above zero"],
        ),
        option(
            "tolerance 5 mm",
            "--tool-diameter 6 --tolerance 5",
            &["tolerance", "1 mm or less"],
        ),
        option(
            "tolerance 1e300",
            "--tool-diameter 6 --tolerance 1e300",
            &["1e300 mm", "1 mm or less"],
        ),
        option(
            "tolerance NaN",
            "--tool-diameter 6 --tolerance nan",
            &["\"nan\" is not a length"],
        ),
        option(
            "tolerance too fine",
            "--tool-diameter 6 --tolerance 1e-12",
            &["too fine", "decimals"],
        ),
        option(
            "lead length 1e9",
            "--tool-diameter 6 --lead line --lead-length 1e9",
            &["lead length", "at most 100 mm"],
        ),
        option(
            "lead radius 1e9",
            "--tool-diameter 6 --lead-radius 1e9",
            &["lead radius", "at most 100 mm"],
        ),
        option(
            "overcut 1e9",
            "--tool-diameter 6 --overcut 1e9",
            &["overcut", "at most 100 mm"],
        ),
        option(
            "tool 1e-9 mm",
            "--tool-diameter 1e-9",
            &["tool diameter", "at least 0.01 mm"],
        ),
        option(
            "tool 1e9 mm",
            "--tool-diameter 1e9",
            &["gouge", "smaller than"],
        ),
        option(
            "ramp angle 0",
            "--tool-diameter 6 --ramp-angle 0",
            &["ramp angle", "between 0 and 45"],
        ),
        option(
            "ramp angle 90",
            "--tool-diameter 6 --ramp-angle 90",
            &["ramp angle", "between 0 and 45"],
        ),
        option("no tool on a mill", "", &["--tool-diameter"]),
        option(
            "tabs both ways",
            "--tool-diameter 6 --tabs 4 --tab-spacing 100",
            &["not both"],
        ),
        option("zero tabs", "--tool-diameter 6 --tabs 0", &["at least 1"]),
        // Profiles.
        Case {
            name: "profile: decimals as text",
            drawing: None,
            args: args(&format!(
                "--tool-diameter 6 --machine {}",
                profile("words", "xy_decimals = 4 ", "xy_decimals = \"four\" ")
            )),
            says: &["line 14", "xy_decimals", "a whole number"],
        },
        Case {
            name: "profile: negative decimals",
            drawing: None,
            args: args(&format!(
                "--tool-diameter 6 --machine {}",
                profile("negative", "xy_decimals = 4 ", "xy_decimals = -3 ")
            )),
            says: &["xy_decimals", "a whole number, 0 or more"],
        },
        Case {
            name: "profile: 20 decimals",
            drawing: None,
            args: args(&format!(
                "--tool-diameter 6 --machine {}",
                profile("twenty", "xy_decimals = 4 ", "xy_decimals = 20 ")
            )),
            says: &["20 decimals", "use 3 to 6"],
        },
        Case {
            name: "profile: zero decimals",
            drawing: None,
            args: args(&format!(
                "--tool-diameter 6 --machine {}",
                profile("zero", "xy_decimals = 4 ", "xy_decimals = 0 ")
            )),
            says: &["0 decimals", "at least 3"],
        },
        Case {
            name: "profile: unknown key",
            drawing: None,
            args: args(&format!(
                "--tool-diameter 6 --machine {}",
                profile(
                    "unknown",
                    "spindle_off = \"M5\"",
                    "spindle_off = \"M5\"\nspindel_delay = 2"
                )
            )),
            says: &["spindel_delay", "spelling"],
        },
        Case {
            name: "profile: negative feed",
            drawing: None,
            args: args(&format!(
                "--tool-diameter 6 --machine {}",
                profile("feed", "cut_feed = 400.0", "cut_feed = -400.0")
            )),
            says: &["cut_feed"],
        },
        Case {
            name: "profile: inverted envelope",
            drawing: None,
            args: args(&format!(
                "--tool-diameter 6 --machine {}",
                profile("inverted", "x_max = 400.0", "x_max = -400.0")
            )),
            says: &["x_max"],
        },
        // Drawings.
        Case {
            name: "empty drawing",
            drawing: Some(Vec::new()),
            args: args("--machine metric-mill --tool-diameter 6"),
            says: &["bad.dxf"],
        },
        Case {
            name: "binary junk",
            drawing: Some(
                (0..4096u32)
                    .map(|i| (i.wrapping_mul(2_654_435_761) >> 24) as u8)
                    .collect(),
            ),
            args: args("--machine metric-mill --tool-diameter 6"),
            says: &["bad.dxf"],
        },
        Case {
            name: "truncated drawing",
            drawing: Some(truncated),
            args: args("--machine metric-mill --tool-diameter 6"),
            says: &["bad.dxf"],
        },
        Case {
            name: "job: a name of 201 characters",
            drawing: None,
            args: args(&format!(
                "--machine metric-mill --tool-diameter 6 --job {}",
                job_with_name(tmp, "long-name", &"L".repeat(201))
            )),
            says: &["line 16", "`name`", "201 characters", "at most 200"],
        },
        Case {
            name: "drawing scaled by 1e200",
            drawing: Some(scaled_demo(1e200)),
            args: args("--machine metric-mill --tool-diameter 6"),
            says: &["bad.dxf", "farther than any machine travels", "units"],
        },
        Case {
            name: "drawing scaled by 1e6",
            drawing: Some(scaled_demo(1e6)),
            args: args("--machine metric-mill --tool-diameter 6"),
            says: &["bad.dxf", "outside the machine's travel"],
        },
        Case {
            name: "drawing with a bay across the outline",
            drawing: Some(demo_with(&bay(
                "FFF1",
                &[(218.0, 50.0), (260.0, 50.0), (260.0, 90.0), (218.0, 90.0)],
            ))),
            args: args("--machine metric-mill --tool-diameter 6"),
            says: &["bay 5", "breaks through the part's outline", "mm"],
        },
        Case {
            name: "drawing with a bay outside the outline",
            drawing: Some(demo_with(&bay(
                "FFF1",
                &[(300.0, 40.0), (340.0, 40.0), (340.0, 100.0), (300.0, 100.0)],
            ))),
            args: args("--machine metric-mill --tool-diameter 6"),
            says: &[
                "bay 5",
                "outside the part's outline",
                "(320.000, 70.000) mm",
            ],
        },
        Case {
            name: "drawing with overlapping bays",
            drawing: Some(demo_with(&bay(
                "FFF1",
                &[(50.0, 50.0), (68.0, 50.0), (68.0, 90.0), (50.0, 90.0)],
            ))),
            args: args("--machine metric-mill --tool-diameter 6"),
            says: &["bay 1 and bay 2 overlap near"],
        },
        Case {
            name: "drawing with a bay drawn twice, the copy cut as a boss",
            drawing: Some(demo_with(&first_bay_again("FFF2"))),
            args: args(&format!(
                "--machine metric-mill --tool-diameter 6 --job {}",
                job(
                    tmp,
                    "twocuts",
                    "[[feature]]\nname = \"left\"\nbay = \"bay 1\"\n\n\
                     [[feature]]\nname = \"copy\"\nbay = \"bay 2\"\ncut = \"boss\"\n"
                )
            )),
            says: &["left and copy are the same opening", "two different cuts"],
        },
        // More drawings.
        on_drawing(
            "drawing without its EOF",
            {
                let t = String::from_utf8(demo_with("")).unwrap();
                t.as_bytes()[..t.rfind("EOF").unwrap()].to_vec()
            },
            &["bad.dxf"],
        ),
        on_drawing(
            "drawing cut off inside its entities",
            {
                let t = String::from_utf8(demo_with("")).unwrap();
                t.as_bytes()[..t.find("OPENING-BAYS").unwrap() + 40].to_vec()
            },
            &["bad.dxf"],
        ),
        on_drawing(
            "drawing with a NaN coordinate",
            demo_with(&line("nan", "0", "10", "10")),
            &["bad.dxf"],
        ),
        on_drawing(
            "drawing with an infinite coordinate",
            demo_with(&line("inf", "0", "10", "10")),
            &["bad.dxf"],
        ),
        on_drawing(
            "drawing with a coordinate of 1e308",
            demo_with(&line("1e308", "0", "10", "10")),
            &["bad.dxf", "FFF3"],
        ),
        on_drawing(
            "drawing with an open bay",
            demo_with(
                &bay("FFF1", &[(100.0, 20.0), (120.0, 20.0), (120.0, 30.0)])
                    .replace(" 70\n1\n", " 70\n0\n"),
            ),
            &["bad.dxf", "OPENING-BAYS"],
        ),
        on_drawing(
            "drawing with a self-crossing bay",
            demo_with(&bay(
                "FFF1",
                &[(100.0, 15.0), (130.0, 28.0), (130.0, 15.0), (100.0, 28.0)],
            )),
            &["bad.dxf", "bay"],
        ),
        on_drawing(
            "drawing with a bay that is not convex",
            demo_with(&bay(
                "FFF1",
                &[
                    (100.0, 12.0),
                    (140.0, 12.0),
                    (120.0, 18.0),
                    (140.0, 28.0),
                    (100.0, 28.0),
                ],
            )),
            &["bad.dxf", "convex"],
        ),
        on_drawing(
            "drawing with a bay smaller than the tool",
            demo_with(&bay(
                "FFF1",
                &[(110.0, 15.0), (113.0, 15.0), (113.0, 18.0), (110.0, 18.0)],
            )),
            &["bad.dxf", "tool"],
        ),
        on_drawing(
            "drawing without units",
            {
                let t = String::from_utf8(demo_with("")).unwrap();
                let at = t.find("$INSUNITS").expect("the demo states its units");
                let end = at + t[at..].find("\n  9\n").unwrap();
                format!("{}{}", &t[..at - 4], &t[end + 1..]).into_bytes()
            },
            &["bad.dxf", "--units"],
        ),
        // Job files.
        with_job(
            "job: an unknown rule",
            job(
                tmp,
                "rule",
                "[[feature]]\nname = \"a\"\nbay = \"bay 1\"\nrule = \"biggest-possible\"\n",
            ),
            &["rule", "biggest-possible"],
        ),
        with_job(
            "job: a rule without its value",
            job(
                tmp,
                "area",
                "[[feature]]\nname = \"a\"\nbay = \"bay 1\"\nrule = \"area\"\n",
            ),
            &["area"],
        ),
        with_job(
            "job: an impossible area",
            job(
                tmp,
                "huge",
                "[[feature]]\nname = \"a\"\nbay = \"bay 1\"\nrule = \"area\"\narea = 1e7\n",
            ),
            &["a", "area"],
        ),
        with_job(
            "job: a point inside no bay",
            job(
                tmp,
                "nowhere",
                "[[feature]]\nname = \"a\"\ninside = [5000.0, 5000.0]\n",
            ),
            &["5000"],
        ),
        with_job(
            "job: a bay the drawing lacks",
            job(
                tmp,
                "missing",
                "[[feature]]\nname = \"a\"\nbay = \"bay 99\"\n",
            ),
            &["bay 99"],
        ),
        with_job(
            "job: an unknown key",
            job(
                tmp,
                "key",
                "[[feature]]\nname = \"a\"\nbay = \"bay 1\"\nmarginn = 2.0\n",
            ),
            &["marginn"],
        ),
        with_job(
            "job: a TOML syntax error",
            job(tmp, "syntax", "[[feature]\nname = \"a\"\n"),
            &["line"],
        ),
        with_job(
            "job: a negative margin",
            job(
                tmp,
                "margin",
                "[[feature]]\nname = \"a\"\nbay = \"bay 1\"\nmargin = -2.0\n",
            ),
            &["margin"],
        ),
        with_job(
            "job: two features of one name",
            job(
                tmp,
                "twice",
                "[[feature]]\nname = \"a\"\nbay = \"bay 1\"\n\n[[feature]]\nname = \"a\"\nbay = \"bay 2\"\n",
            ),
            &["\"a\""],
        ),
        with_job(
            "job: a CSV of two points",
            {
                let c = csv(tmp, "two", "x,y\n60,70\n70,75\n");
                job(
                    tmp,
                    "csv2",
                    &format!("[[feature]]\nname = \"scan\"\nfit_csv = \"{c}\"\n"),
                )
            },
            &["scan", "at least 5 points"],
        ),
        with_job(
            "job: a CSV with NaN",
            {
                let c = csv(
                    tmp,
                    "nan",
                    "x,y\n60,70\n70,nan\n80,72\n75,60\n65,62\n62,66\n",
                );
                job(
                    tmp,
                    "csvnan",
                    &format!("[[feature]]\nname = \"scan\"\nfit_csv = \"{c}\"\n"),
                )
            },
            &["nan.csv", "line 3"],
        ),
        with_job(
            "job: a CSV with text",
            {
                let c = csv(
                    tmp,
                    "text",
                    "x,y\n60,70\nseventy,75\n80,72\n75,60\n65,62\n62,66\n",
                );
                job(
                    tmp,
                    "csvtext",
                    &format!("[[feature]]\nname = \"scan\"\nfit_csv = \"{c}\"\n"),
                )
            },
            &["text.csv", "line 3"],
        ),
        with_job(
            "job: a CSV of collinear points",
            {
                let c = csv(
                    tmp,
                    "line",
                    "x,y\n60,70\n62,70\n64,70\n66,70\n68,70\n70,70\n",
                );
                job(
                    tmp,
                    "csvline",
                    &format!("[[feature]]\nname = \"scan\"\nfit_csv = \"{c}\"\n"),
                )
            },
            &["scan"],
        ),
        with_job(
            "job: a CSV that does not exist",
            job(
                tmp,
                "csvgone",
                "[[feature]]\nname = \"scan\"\nfit_csv = \"no-such-scan.csv\"\n",
            ),
            &["no-such-scan.csv"],
        ),
        Case {
            name: "no such bay layer",
            drawing: None,
            args: args("--machine metric-mill --tool-diameter 6 --bay-layer NOSUCH"),
            says: &["NOSUCH", "OPENING-BAYS"],
        },
    ];
    for c in &mut out {
        if c.drawing.is_none() {
            c.drawing = Some(demo.clone());
        }
    }
    out
}

#[test]
fn every_bad_input_is_refused_in_plain_words_and_changes_nothing() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    // An earlier, good run's set in the output folder.
    Command::cargo_bin("conicut")
        .unwrap()
        .arg("plan")
        .arg(demo_drawing())
        .args(["--machine", "metric-mill", "--tool-diameter", "6", "--out"])
        .arg(&out)
        .assert()
        .success();
    let before = files(&out);
    let mut failures = Vec::new();
    let catalogue = cases(tmp.path());
    eprintln!("{} bad inputs", catalogue.len());
    assert!(
        catalogue.len() >= 60,
        "the catalogue holds {} inputs",
        catalogue.len()
    );
    for case in catalogue {
        // Each drawing under the same name, so that its outputs would land on the earlier set.
        let dir = tmp.path().join(case.name.replace([' ', ':'], "-"));
        fs::create_dir_all(&dir).unwrap();
        let drawing = dir.join(
            if case.name.contains("drawing") || case.name == "binary junk" {
                "bad.dxf"
            } else {
                "truss-bracket.dxf"
            },
        );
        fs::write(&drawing, case.drawing.as_ref().unwrap()).unwrap();
        let run = Command::cargo_bin("conicut")
            .unwrap()
            .arg("plan")
            .arg(&drawing)
            .args(&case.args)
            .arg("--out")
            .arg(&out)
            .timeout(std::time::Duration::from_secs(120))
            .output()
            .unwrap();
        let message = String::from_utf8_lossy(&run.stderr).into_owned();
        let problems: Vec<String> = [
            (run.status.success()).then(|| "it was not refused".to_string()),
            (run.status.code() == Some(101)).then(|| "it panicked".to_string()),
            (message.contains("bug") || message.contains("fault in conicut"))
                .then(|| "it blames conicut".to_string()),
        ]
        .into_iter()
        .flatten()
        .chain(
            case.says
                .iter()
                .filter(|w| !message.contains(*w))
                .map(|w| format!("the message lacks {w:?}")),
        )
        .collect();
        if !problems.is_empty() {
            failures.push(format!(
                "{}: {}\n    {}",
                case.name,
                problems.join("; "),
                message.trim()
            ));
        }
        if files(&out) != before {
            failures.push(format!("{}: the output folder changed", case.name));
        }
    }
    assert!(failures.is_empty(), "\n{}", failures.join("\n"));
}

/// A long name (once, 89 characters or more wrapped the cut's heading over two lines, and the
/// checker then measured the wrong moves): planned, its heading one line.
#[test]
fn a_long_feature_name_heads_its_cut_on_one_line() {
    let tmp = tempfile::tempdir().unwrap();
    let name = "L".repeat(200);
    let job = job_with_name(tmp.path(), "job", &name);
    let out = tmp.path().join("out");
    Command::cargo_bin("conicut")
        .unwrap()
        .arg("plan")
        .arg(demo_drawing())
        .args([
            "--machine",
            "metric-mill",
            "--tool-diameter",
            "6",
            "--job",
            &job,
            "--out",
        ])
        .arg(&out)
        .assert()
        .success();
    let program = fs::read_to_string(out.join("truss-bracket.nc")).unwrap();
    let heading = program
        .lines()
        .find(|l| l.starts_with("(cut ") && l.contains(&name))
        .expect("the cut's heading names it");
    assert!(heading.ends_with(&format!(": {name})")), "{heading}");
    assert!(
        program.lines().all(|l| l.len() <= 256),
        "every line within 256 characters"
    );
}

/// The demo drawing as text with "\n" line ends, its sections (HEADER, TABLES, ENTITIES,
/// OBJECTS) in reverse order: the DXF reference lists them in a fixed order, but nothing in a
/// section depends on where it stands.
fn sections_reversed() -> Vec<u8> {
    let text = fs::read_to_string(demo_drawing())
        .unwrap()
        .replace("\r\n", "\n");
    let lines: Vec<&str> = text.lines().collect();
    let mut sections: Vec<Vec<&str>> = Vec::new();
    let mut rest = Vec::new();
    let mut current: Option<Vec<&str>> = None;
    for pair in lines.chunks(2) {
        let (code, value) = (pair[0].trim(), pair.get(1).map_or("", |v| v.trim()));
        match current.as_mut() {
            None if code == "0" && value == "SECTION" => current = Some(pair.to_vec()),
            None => rest.extend_from_slice(pair),
            Some(section) => {
                section.extend_from_slice(pair);
                if code == "0" && value == "ENDSEC" {
                    sections.push(current.take().unwrap());
                }
            }
        }
    }
    assert_eq!(sections.len(), 4, "the demo's four sections");
    assert_eq!(rest, ["  0", "EOF"]);
    let out: Vec<&str> = sections.into_iter().rev().flatten().chain(rest).collect();
    (out.join("\n") + "\n").into_bytes()
}

fn plan_in(dir: &Path, drawing: &[u8]) -> (BTreeMap<String, Vec<u8>>, String) {
    fs::create_dir_all(dir).unwrap();
    let path = dir.join("truss-bracket.dxf");
    fs::write(&path, drawing).unwrap();
    let out = dir.join("out");
    let run = Command::cargo_bin("conicut")
        .unwrap()
        .arg("plan")
        .arg(&path)
        .args(["--machine", "metric-mill", "--tool-diameter", "6", "--out"])
        .arg(&out)
        .output()
        .unwrap();
    let said =
        String::from_utf8_lossy(&run.stdout).into_owned() + &String::from_utf8_lossy(&run.stderr);
    assert!(run.status.success(), "{}: {said}", dir.display());
    (files(&out), said)
}

/// Drawings that are odd but unambiguous are read as what they mean: a byte-order mark, CRLF
/// line ends and sections out of order give the plain demo's program byte for byte; a bay or a
/// drawn hole drawn twice is cut once, with a warning naming both copies.
#[test]
fn odd_but_unambiguous_drawings_plan_as_the_plain_one() {
    let tmp = tempfile::tempdir().unwrap();
    let plain_text = fs::read_to_string(demo_drawing())
        .unwrap()
        .replace("\r\n", "\n");
    let (plain, _) = plan_in(&tmp.path().join("plain"), plain_text.as_bytes());
    let program = &plain["truss-bracket.nc"];
    let odd = [
        ("bom", format!("\u{feff}{plain_text}").into_bytes()),
        ("crlf", plain_text.replace('\n', "\r\n").into_bytes()),
        ("sections reversed", sections_reversed()),
    ];
    for (name, drawing) in odd {
        let (got, _) = plan_in(&tmp.path().join(name), &drawing);
        assert!(
            got["truss-bracket.nc"] == *program,
            "{name}: the program differs from the plain drawing's"
        );
    }
    let twice_dir = tmp.path().join("twice");
    let (twice, said) = plan_in(&twice_dir, &demo_with(&first_bay_again("FFF2")));
    // The checker plans the drawing again the same way: the program passes.
    Command::cargo_bin("conicut")
        .unwrap()
        .arg("check")
        .arg(twice_dir.join("out/truss-bracket.nc"))
        .arg("--against")
        .arg(twice_dir.join("truss-bracket.dxf"))
        .args(["--machine", "metric-mill", "--tool-diameter", "6"])
        .assert()
        .success();
    let text = String::from_utf8(twice["truss-bracket.nc"].clone()).unwrap();
    let plain_text_program = String::from_utf8(program.clone()).unwrap();
    let cuts = |p: &str| p.lines().filter(|l| l.starts_with("(cut ")).count();
    assert_eq!(
        cuts(&text),
        cuts(&plain_text_program),
        "the copy is not cut"
    );
    // A drawn hole drawn twice: cut once, with a warning naming both.
    let (circle_twice, said_circle) = plan_in(
        &tmp.path().join("circle twice"),
        &demo_with(&first_circle_again("FFF4")),
    );
    let circle_program = String::from_utf8(circle_twice["truss-bracket.nc"].clone()).unwrap();
    assert_eq!(cuts(&circle_program), cuts(&plain_text_program));
    assert!(
        said_circle.contains(
            "The circle on layer BOLT-HOLES (handle FFF4) is the same as the circle on layer \
             BOLT-HOLES (handle 1E): drawn twice. It is cut once"
        ),
        "{said_circle}"
    );
    let report = String::from_utf8(twice["truss-bracket-report.json"].clone()).unwrap();
    for says in [&report, &said] {
        assert!(
            says.contains("bay 2 is the same opening as bay 1 (centre (")
                && says.contains("It is cut once"),
            "{says}"
        );
    }
}
