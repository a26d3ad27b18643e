//! The whole job through the `conicut` binary: the demo and a user's drawing, outputs read back
//! with an outside G-code parser (the `gcode` crate) and checked against the format rules of the
//! NIST RS274/NGC report (NISTIR 6556) and against the exact tool-centre curve.

#[path = "support/gcode_read.rs"]
mod gcode_read;
use assert_cmd::Command;
use conicut::geom::{Ellipse, Point};
use gcode_read::{marked_moves, read_back};
use std::fs;
use std::path::Path;

fn conicut() -> Command {
    Command::cargo_bin("conicut").expect("the conicut binary is built")
}

fn run_demo(dir: &Path) -> String {
    let out = conicut()
        .current_dir(dir)
        .arg("demo")
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    String::from_utf8(out).expect("utf-8 summary")
}

/// Checks every line against the format rules and returns the program's lines.
fn check_format(program: &str) -> Vec<&str> {
    let lines: Vec<&str> = program.lines().collect();
    // NISTIR 6556 §3.1: a leading "%" needs a matching closing "%"; M2/M30 ends the program.
    assert_eq!(lines.first(), Some(&"%"));
    assert_eq!(lines.last(), Some(&"%"));
    let m30 = lines.iter().position(|l| l.trim() == "M30").expect("M30");
    assert_eq!(m30, lines.len() - 2, "M30 right before the closing %");
    for line in &lines {
        // §3.3: at most 256 characters a line.
        assert!(line.len() <= 256, "line too long: {line}");
        if line.starts_with('(') {
            // §3.3.4: one comment, no nested parentheses.
            assert!(line.ends_with(')'));
            assert_eq!(line.matches('(').count(), 1, "nested comment: {line}");
            continue;
        }
        for word in line.split_whitespace() {
            let (letter, value) = word.split_at(1);
            assert!(
                letter.chars().all(|c| c.is_ascii_uppercase()) || word == "%",
                "bad word {word}"
            );
            if word == "%" {
                continue;
            }
            // §3.3.2.1: no exponent form; and DESIGN.md: fixed decimals, never "-0".
            assert!(!value.contains(['e', 'E']), "exponent in {word}");
            assert!(
                value.parse::<f64>().is_ok(),
                "not a number in {word} ({line})"
            );
            if value.starts_with('-') {
                assert!(
                    value
                        .trim_start_matches('-')
                        .chars()
                        .any(|c| ('1'..='9').contains(&c)),
                    "negative zero in {word}"
                );
            }
            let decimals = value.split('.').nth(1).map(str::len);
            match letter {
                "X" | "Y" => assert_eq!(decimals, Some(4), "{word}"),
                "Z" => assert_eq!(decimals, Some(3), "{word}"),
                _ => {}
            }
        }
    }
    lines
}

#[test]
fn demo_writes_program_preview_and_report() {
    let tmp = tempfile::tempdir().unwrap();
    let summary = run_demo(tmp.path());
    let out = tmp.path().join("conicut-demo");
    for name in [
        "truss-bracket.nc",
        "truss-bracket.svg",
        "truss-bracket-report.txt",
        "truss-bracket-report.json",
    ] {
        let p = out.join(name);
        assert!(p.is_file(), "{name} missing");
        assert!(summary.contains(name), "summary names {name}");
    }
    // Written through a staging folder that is gone once the set is in place.
    assert!(!out.join(".conicut-writing").exists());
    assert!(summary.contains("bay 1") && summary.contains("outline"));

    let program = fs::read_to_string(out.join("truss-bracket.nc")).unwrap();
    check_demo_program(&program);
    let json: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(out.join("truss-bracket-report.json")).unwrap())
            .expect("report JSON");
    let openings = check_demo_report(&json);
    check_openings_on_the_curve(&program, &json, &openings);
}

/// The demo program: format rules, units and modes, the safety block, and what an outside parser
/// reads in it.
fn check_demo_program(program: &str) {
    check_format(program);
    assert!(program.contains("G21") && program.contains("G90") && program.contains("G17"));
    assert!(program.contains("(SAFETY"));
    assert!(
        program.contains("(The machine maker's manual and local safety rules take precedence"),
        "precedence statement"
    );

    // An outside parser reads the whole program: feed moves, arcs among them.
    let parsed = gcode::parse(program).expect("the gcode crate parses the program");
    let count = |major: u32| {
        parsed
            .blocks
            .iter()
            .flat_map(|b| b.codes.iter())
            .filter(|c| matches!(c, gcode::Code::General(g) if g.number.major() == major))
            .count()
    };
    assert!(count(3) > 40, "{} G3 blocks", count(3));
    assert!(count(1) >= 9, "{} G1 blocks", count(1));
}

/// The demo report: every feature within the tolerance and in two moves at least; returns the
/// openings.
fn check_demo_report(json: &serde_json::Value) -> Vec<&serde_json::Value> {
    let features = json["features"].as_array().expect("features");
    let openings: Vec<_> = features.iter().filter(|f| f["kind"] == "opening").collect();
    assert!(openings.len() >= 3);
    for f in features {
        let dev = f["measured_deviation_mm"].as_f64().unwrap();
        assert!(dev <= json["tolerance_mm"].as_f64().unwrap(), "{f}");
        // A full circle takes at least two arcs (each below 180°), an ellipse more.
        assert!(f["contour_moves"].as_u64().unwrap() >= 2);
    }
    openings
}

fn check_openings_on_the_curve(
    program: &str,
    json: &serde_json::Value,
    openings: &[&serde_json::Value],
) {
    // Every G1 point of every opening's cut lies on the exact tool-centre curve (the inward
    // parallel curve at the tool radius) to within the tolerance, read back from the program text
    // by the outside parser (f32 values: allow 1e-4 mm more).
    let tol = json["tolerance_mm"].as_f64().unwrap();
    let r = json["tool_diameter_mm"].as_f64().unwrap() / 2.0;
    let cuts = split_cuts(program);
    for f in openings {
        let name = f["name"].as_str().unwrap();
        let e = &f["ellipse"];
        let ellipse = Ellipse::new(
            Point::new(
                e["center_mm"][0].as_f64().unwrap(),
                e["center_mm"][1].as_f64().unwrap(),
            ),
            e["semi_major_mm"].as_f64().unwrap(),
            e["semi_minor_mm"].as_f64().unwrap(),
            e["angle_deg"].as_f64().unwrap().to_radians(),
        )
        .unwrap();
        let points = &cuts
            .iter()
            .find(|(n, _)| n == name)
            .unwrap_or_else(|| panic!("cut {name} in program"))
            .1;
        // The first feed move with XY may be the move in from the plunge point; the end points
        // of the rest (lines and arcs) lie on the curve.
        assert!(points.len() > 8, "{name}: {} moves read", points.len());
        for p in &points[1..] {
            let (delta, _) = ellipse.distance_to(*p);
            assert!(ellipse.contains(*p));
            assert!(
                (delta - r).abs() <= tol + 1e-4,
                "{name}: point {p:?} is {delta} from the ellipse, tool radius {r}"
            );
        }
    }
}

/// The XY end points of the feed moves of each cut, by the cut's name from its comment
/// `(cut N of M: NAME)`, read with the `gcode` crate (`support/gcode_read.rs`, f32 values): only
/// the moves after a `(contour)` comment (not the entry, leads, overcut or lead-out), and of
/// those not the moves that change Z (entries: ramps into the material).
fn split_cuts(program: &str) -> Vec<(String, Vec<Point>)> {
    let read = read_back(program);
    read.features
        .iter()
        .map(|(name, _)| {
            let points = marked_moves(&read, name, "contour")
                .into_iter()
                .map(|k| read.moves[k])
                .filter(|m| !m.rapid && m.from[2] == m.to[2])
                .map(|m| Point::new(m.to[0], m.to[1]))
                .collect();
            (name.clone(), points)
        })
        .collect()
}

#[test]
fn plan_on_the_bundled_drawing_matches_the_demo() {
    let tmp = tempfile::tempdir().unwrap();
    run_demo(tmp.path());
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    conicut()
        .current_dir(tmp.path())
        .args(["plan"])
        .arg(root.join("demo-parts/truss-bracket.dxf"))
        .arg("--machine")
        .arg(root.join("machine-profiles/metric-mill.toml"))
        .args(["--tool-diameter", "6", "--margin", "4", "--depth", "3.5"])
        .args(["--out", "mine"])
        .assert()
        .success();
    let demo = fs::read_to_string(tmp.path().join("conicut-demo/truss-bracket.nc")).unwrap();
    let mine = fs::read_to_string(tmp.path().join("mine/truss-bracket.nc")).unwrap();
    assert_eq!(
        demo, mine,
        "the bundled file and the built-in demo give the same program"
    );
}

#[test]
fn refusals_leave_no_output() {
    let tmp = tempfile::tempdir().unwrap();
    // A tool wider than twice the smallest radius of curvature b²/a of the openings gouges.
    let assert = conicut()
        .current_dir(tmp.path())
        .args(["demo", "--tool-diameter", "20", "--out", "gouge"])
        .assert()
        .failure();
    let err = String::from_utf8_lossy(&assert.get_output().stderr).into_owned();
    assert!(err.contains("b²/a"), "{err}");
    assert!(
        err.contains("truss-bracket.dxf"),
        "names the drawing: {err}"
    );
    assert!(!tmp.path().join("gouge").exists());

    // A drawing without units is refused unless --units says which.
    let mut d = dxf::Drawing::new();
    d.header.version = dxf::enums::AcadVersion::R2000;
    d.header.default_drawing_units = dxf::enums::Units::Unitless;
    let square = [(0.0, 0.0), (60.0, 0.0), (60.0, 40.0), (0.0, 40.0)];
    for i in 0..4 {
        let (a, b) = (square[i], square[(i + 1) % 4]);
        let mut e =
            dxf::entities::Entity::new(dxf::entities::EntityType::Line(dxf::entities::Line::new(
                dxf::Point::new(a.0, a.1, 0.0),
                dxf::Point::new(b.0, b.1, 0.0),
            )));
        e.common.layer = conicut::chain::DEFAULT_BAY_LAYER.to_string();
        d.add_entity(e);
    }
    let path = tmp.path().join("plain.dxf");
    d.save_file(&path).unwrap();
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let profile = root.join("machine-profiles/metric-mill.toml");
    let assert = conicut()
        .current_dir(tmp.path())
        .arg("plan")
        .arg(&path)
        .arg("--machine")
        .arg(&profile)
        .args(["--tool-diameter", "6", "--out", "plain-out"])
        .assert()
        .failure();
    let err = String::from_utf8_lossy(&assert.get_output().stderr).into_owned();
    assert!(err.contains("--units"), "{err}");
    assert!(!tmp.path().join("plain-out").exists());
    conicut()
        .current_dir(tmp.path())
        .arg("plan")
        .arg(&path)
        .arg("--machine")
        .arg(&profile)
        .args([
            "--tool-diameter",
            "6",
            "--units",
            "mm",
            "--out",
            "plain-out",
        ])
        .assert()
        .success();
    assert!(tmp.path().join("plain-out/plain.nc").is_file());
}

#[test]
fn demo_runs_for_every_bundled_machine_kind() {
    // The same drawing cut on a mill and a router (tool below the work zero) and on laser,
    // plasma and waterjet tables (cut through with the profile's kerf, never below the sheet).
    let tmp = tempfile::tempdir().unwrap();
    for (machine, through) in [
        ("metric-mill", false),
        ("inch-router", false),
        ("laser", true),
        ("plasma", true),
        ("waterjet", true),
    ] {
        conicut()
            .current_dir(tmp.path())
            .args(["demo", "--machine", machine, "--out", machine])
            .assert()
            .success();
        let stem = if machine == "metric-mill" {
            "truss-bracket".to_string()
        } else {
            format!("truss-bracket-{machine}")
        };
        let dir = tmp.path().join(machine);
        let program = fs::read_to_string(dir.join(format!("{stem}.nc"))).unwrap();
        assert!(
            gcode::parse(&program).is_ok(),
            "{machine}: the gcode crate reads it"
        );
        assert!(
            program.contains("take precedence"),
            "{machine}: precedence statement"
        );
        let json: serde_json::Value = serde_json::from_str(
            &fs::read_to_string(dir.join(format!("{stem}-report.json"))).unwrap(),
        )
        .unwrap();
        let tol = json["tolerance_mm"].as_f64().unwrap();
        for f in json["features"].as_array().unwrap() {
            assert!(
                f["measured_deviation_mm"].as_f64().unwrap() <= tol,
                "{machine}: {f}"
            );
        }
        let z_min = json["program_bounds_mm"]["min"][2].as_f64().unwrap();
        if through {
            assert!(
                z_min >= 0.0,
                "{machine}: the head stays above the sheet ({z_min})"
            );
            assert!(program.contains("G4 P"), "{machine}: a pierce dwell");
            assert_eq!(json["cut_depth_mm"].as_f64(), Some(0.0));
        } else {
            // To half the last Z decimal (0.00005 in = 0.00127 mm on the inch router).
            assert!(
                (z_min + 3.5).abs() <= 0.00127,
                "{machine}: cuts to −3.5 mm ({z_min})"
            );
        }
        // The arc rule of NISTIR 6556 §3.5.3.2 holds for what was written.
        let mismatch = json["largest_arc_radius_mismatch_mm"].as_f64().unwrap();
        let rule = if machine == "inch-router" {
            0.0002 * 25.4
        } else {
            0.002
        };
        assert!(mismatch <= rule, "{machine}: {mismatch}");
    }
}

#[test]
fn scrap_side_only_keeps_every_deviation_off_the_part() {
    // With --scrap-side-only the written path may reach onto the part side only by the output
    // rounding: for arcs at 4 decimals in mm, 2√2 × 0.0001 mm (the writer's arc bound,
    // tests/post_arcs.rs); lines-only at √2/2 × 0.0001 mm.
    let tmp = tempfile::tempdir().unwrap();
    for (flags, allowance) in [
        (vec!["--scrap-side-only"], 2.0 * 2f64.sqrt() * 1e-4),
        (
            vec!["--scrap-side-only", "--lines-only"],
            0.5 * 2f64.sqrt() * 1e-4,
        ),
    ] {
        conicut()
            .current_dir(tmp.path())
            .arg("demo")
            .args(&flags)
            .args(["--out", "one-sided"])
            .assert()
            .success();
        let json: serde_json::Value = serde_json::from_str(
            &fs::read_to_string(tmp.path().join("one-sided/truss-bracket-report.json")).unwrap(),
        )
        .unwrap();
        for f in json["features"].as_array().unwrap() {
            let part = f["part_side_deviation_mm"].as_f64().unwrap();
            assert!(part <= allowance, "{flags:?} {}: {part}", f["name"]);
            assert!(f["measured_deviation_mm"].as_f64().unwrap() <= 0.01);
        }
    }
}

#[test]
fn depth_passes_are_read_back_within_tolerance() {
    // 3.5 mm in passes of 1.5 mm: every feature is cut three times; the checker reads all passes
    // back and measures them against the same exact curve.
    let tmp = tempfile::tempdir().unwrap();
    conicut()
        .current_dir(tmp.path())
        .args([
            "demo",
            "--stepdown",
            "1.5",
            "--entry",
            "straight",
            "--out",
            "passes",
        ])
        .assert()
        .success();
    let program = fs::read_to_string(tmp.path().join("passes/truss-bracket.nc")).unwrap();
    let floors = program.lines().filter(|l| l.starts_with("G1 Z-")).count();
    assert_eq!(
        floors,
        9 * 3,
        "three straight plunges for each of the nine cuts"
    );
    let json: serde_json::Value = serde_json::from_str(
        &fs::read_to_string(tmp.path().join("passes/truss-bracket-report.json")).unwrap(),
    )
    .unwrap();
    assert!((json["program_bounds_mm"]["min"][2].as_f64().unwrap() + 3.5).abs() < 1e-9);
    for f in json["features"].as_array().unwrap() {
        assert!(f["measured_deviation_mm"].as_f64().unwrap() <= 0.01, "{f}");
    }
}

#[test]
fn ramps_enter_no_steeper_than_asked_and_end_on_the_contour() {
    // The default entry on a mill is a zig-zag ramp along the entry line, never steeper than
    // the ramp angle (3° by default; common practice 1–3° in steel, STANDARDS §4.3). Read the
    // legs back and check each one's slope.
    let tmp = tempfile::tempdir().unwrap();
    conicut()
        .current_dir(tmp.path())
        .args(["demo", "--stepdown", "1.5", "--out", "ramps"])
        .assert()
        .success();
    let program = fs::read_to_string(tmp.path().join("ramps/truss-bracket.nc")).unwrap();
    let trace = read_back(&program);
    let legs: Vec<_> = trace
        .moves
        .iter()
        .filter(|m| {
            !m.rapid && m.from[2] != m.to[2] && (m.from[0], m.from[1]) != (m.to[0], m.to[1])
        })
        .collect();
    assert!(
        legs.len() >= 9 * 3,
        "at least one ramp leg per pass: {}",
        legs.len()
    );
    for m in &legs {
        // The length travelled in XY: the chord of a line, the arc of a helix turn.
        let chord = (m.to[0] - m.from[0]).hypot(m.to[1] - m.from[1]);
        let run = match m.arc {
            None => chord,
            Some((c, _)) => {
                let radius = (m.from[0] - c[0]).hypot(m.from[1] - c[1]);
                2.0 * radius * (0.5 * chord / radius).min(1.0).asin()
            }
        };
        let drop = m.from[2] - m.to[2];
        assert!(drop > 0.0, "ramps only go down: line {}", m.line);
        // 3° with the rounding of 3 Z decimals and 4 XY decimals.
        assert!(
            drop / run <= 3f64.to_radians().tan() + 2e-3 / run,
            "line {}: {:.3}°",
            m.line,
            (drop / run).atan().to_degrees()
        );
    }
    // No straight plunge into material: a move straight down ends no deeper than a floor the
    // tool has already cut at that point (a later pass going back down its entry).
    let mut cut_to: Vec<([f64; 2], f64)> = Vec::new();
    for m in &trace.moves {
        let xy = [m.to[0], m.to[1]];
        let straight_down = (m.from[0], m.from[1]) == (m.to[0], m.to[1]) && m.to[2] < m.from[2];
        if straight_down && !m.rapid && m.to[2] < 0.0 {
            assert!(
                cut_to
                    .iter()
                    .any(|(p, z)| (p[0] - xy[0]).hypot(p[1] - xy[1]) < 1e-6 && *z <= m.to[2]),
                "line {}: a straight plunge into uncut material",
                m.line
            );
        }
        if !m.rapid {
            cut_to.push(([m.to[0], m.to[1]], m.to[2]));
        }
    }
    // Every pass floor is reached.
    for z in ["Z-1.500", "Z-3.000", "Z-3.500"] {
        assert!(program.contains(z), "{z}");
    }
}
