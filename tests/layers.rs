//! Which layers are cut: frozen, off and non-plotting layers never are, unless named to cut;
//! `--cut-layers` and `--skip-layers` (and the job file's `cut_layers`, `skip_layers`) choose;
//! the report lists every layer with its use, and what was not cut with layer and handle.
//!
//! Drawings are written by the outside `dxf` crate (R2000, mm), whose layer table has the "on"
//! (negative colour) and "plotted" states; it keeps no frozen flag, so the test sets bit 1 of
//! the FROZEN layer's group 70 in the written text (DXF reference, LAYER table: flag 1 =
//! frozen).

use assert_cmd::Command;
use dxf::entities::{Circle, Entity, EntityType, Line};
use dxf::enums::AcadVersion;
use dxf::tables::Layer;
use std::fs;
use std::path::Path;

fn conicut() -> Command {
    Command::cargo_bin("conicut").expect("the conicut binary is built")
}

fn mill() -> String {
    format!(
        "{}/machine-profiles/metric-mill.toml",
        env!("CARGO_MANIFEST_DIR")
    )
}

fn put(d: &mut dxf::Drawing, layer: &str, kind: EntityType) {
    let mut e = Entity::new(kind);
    e.common.layer = layer.into();
    d.add_entity(e);
}

fn line(d: &mut dxf::Drawing, layer: &str, a: (f64, f64), b: (f64, f64)) {
    put(
        d,
        layer,
        EntityType::Line(Line::new(
            dxf::Point::new(a.0, a.1, 0.0),
            dxf::Point::new(b.0, b.1, 0.0),
        )),
    );
}

fn circle(d: &mut dxf::Drawing, layer: &str, x: f64, y: f64) {
    put(
        d,
        layer,
        EntityType::Circle(Circle::new(dxf::Point::new(x, y, 0.0), 5.0)),
    );
}

/// A 200 × 100 plate, a square bay on a non-plotting bay layer, and one Ø10 circle on each of
/// HOLES (shown), OFFL (off), NOPLOT (not plotted), FROZEN (frozen) and DIMS (shown).
fn write(path: &Path) {
    let mut d = dxf::Drawing::new();
    d.header.version = AcadVersion::R2000;
    d.header.default_drawing_units = dxf::enums::Units::Millimeters;
    for (name, on, plotted) in [
        ("PLATE", true, true),
        ("OPENING-BAYS", true, false),
        ("HOLES", true, true),
        ("OFFL", false, true),
        ("NOPLOT", true, false),
        ("FROZEN", true, true),
        ("DIMS", true, true),
    ] {
        d.add_layer(Layer {
            name: name.into(),
            is_layer_on: on,
            is_layer_plotted: plotted,
            ..Default::default()
        });
    }
    let plate = [(0.0, 0.0), (200.0, 0.0), (200.0, 100.0), (0.0, 100.0)];
    let bay = [(20.0, 20.0), (80.0, 20.0), (80.0, 80.0), (20.0, 80.0)];
    for i in 0..4 {
        line(&mut d, "PLATE", plate[i], plate[(i + 1) % 4]);
        line(&mut d, "OPENING-BAYS", bay[i], bay[(i + 1) % 4]);
    }
    for (k, layer) in ["HOLES", "OFFL", "NOPLOT", "FROZEN", "DIMS"]
        .into_iter()
        .enumerate()
    {
        circle(&mut d, layer, 110.0 + 18.0 * k as f64, 50.0);
    }
    let mut text = Vec::new();
    d.save(&mut text).unwrap();
    let text = String::from_utf8(text).unwrap();
    // Set the FROZEN layer's flag 1: the group 70 after its name, as the crate writes it.
    let record = "  2\r\nFROZEN\r\n 70\r\n     0\r\n";
    assert_eq!(text.matches(record).count(), 1, "the FROZEN layer record");
    let text = text.replace(record, "  2\r\nFROZEN\r\n 70\r\n     1\r\n");
    fs::write(path, text).unwrap();
}

fn plan(dir: &Path, extra: &[&str]) -> serde_json::Value {
    let machine = mill();
    let mut args = vec![
        "plan",
        "layers.dxf",
        "--machine",
        &machine,
        "--tool-diameter",
        "3",
        "--out",
        "out",
    ];
    args.extend_from_slice(extra);
    conicut().current_dir(dir).args(&args).assert().success();
    serde_json::from_str(&fs::read_to_string(dir.join("out/layers-report.json")).unwrap()).unwrap()
}

/// The circles cut, by their centres' x: the circles sit 18 mm apart from x = 110 and each
/// hole's plunge point lies inside its circle of radius 5.
fn holes_cut(report: &serde_json::Value) -> Vec<f64> {
    let mut xs: Vec<f64> = report["features"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|f| f["kind"] == "hole")
        .map(|f| {
            let x = f["plunge_mm"][0].as_f64().unwrap();
            110.0 + 18.0 * ((x - 110.0) / 18.0).round()
        })
        .collect();
    xs.sort_by(f64::total_cmp);
    xs
}

fn layer<'a>(report: &'a serde_json::Value, name: &str) -> &'a serde_json::Value {
    report["layers"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["name"] == name)
        .unwrap_or_else(|| panic!("layer {name} in {}", report["layers"]))
}

fn notes(report: &serde_json::Value) -> String {
    report["notes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|n| n.as_str().unwrap().to_string())
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn hidden_layers_are_not_cut_and_are_listed() {
    let dir = tempfile::tempdir().unwrap();
    write(&dir.path().join("layers.dxf"));
    let report = plan(dir.path(), &["--skip-layers", "dims"]);
    // Only the circle on HOLES (x = 110) is cut; the bay is still solved from its
    // non-plotting layer.
    assert_eq!(holes_cut(&report), [110.0]);
    assert!(
        report["features"]
            .as_array()
            .unwrap()
            .iter()
            .any(|f| f["name"] == "bay 1")
    );
    for (name, role, reason) in [
        ("PLATE", "cut", None),
        ("HOLES", "cut", None),
        ("OPENING-BAYS", "bays", None),
        ("OFFL", "not-cut", Some("off")),
        ("NOPLOT", "not-cut", Some("not plotted")),
        ("FROZEN", "not-cut", Some("frozen")),
        ("DIMS", "not-cut", Some("skipped")),
    ] {
        let l = layer(&report, name);
        assert_eq!(l["role"], role, "{name}");
        assert_eq!(l["reason"].as_str(), reason, "{name}");
    }
    let notes = notes(&report);
    for expect in [
        "layer OFFL is off in the drawing, so its 1 entity is not cut: CIRCLE",
        "layer FROZEN is frozen in the drawing",
        "layer NOPLOT is not plotted in the drawing",
        "layer DIMS is named in the layers to skip",
    ] {
        assert!(notes.contains(expect), "{expect}:\n{notes}");
    }
    let text = fs::read_to_string(dir.path().join("out/layers-report.txt")).unwrap();
    assert!(text.contains("FROZEN (not cut, frozen, 1)"), "{text}");
}

#[test]
fn the_cut_list_chooses_even_a_hidden_layer_and_a_wrong_name_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    write(&dir.path().join("layers.dxf"));
    let report = plan(dir.path(), &["--cut-layers", "PLATE,frozen"]);
    // FROZEN's circle (x = 164) is cut because it is named; HOLES' is not in the list.
    assert_eq!(holes_cut(&report), [164.0]);
    assert_eq!(layer(&report, "HOLES")["reason"], "not in the cut list");

    let out = conicut()
        .current_dir(dir.path())
        .args([
            "plan",
            "layers.dxf",
            "--machine",
            &mill(),
            "--tool-diameter",
            "3",
            "--cut-layers",
            "PLATE,HOELS",
        ])
        .output()
        .unwrap();
    assert!(!out.status.success());
    let message = String::from_utf8_lossy(&out.stderr);
    assert!(message.contains("\"HOELS\""), "{message}");
    assert!(message.contains("HOLES"), "the layers listed: {message}");
    assert!(
        !dir.path().join("layers-conicut").exists(),
        "nothing written"
    );
}

#[test]
fn the_job_file_names_layers_and_the_command_line_wins() {
    let dir = tempfile::tempdir().unwrap();
    write(&dir.path().join("layers.dxf"));
    fs::write(
        dir.path().join("job.toml"),
        "units = \"mm\"\nskip_layers = [\"HOLES\"]\n[[feature]]\nname = \"bay 1\"\nbay = \"bay 1\"\n",
    )
    .unwrap();
    // HOLES is skipped; DIMS (x = 182) is shown and cut.
    let report = plan(dir.path(), &["--job", "job.toml"]);
    assert_eq!(holes_cut(&report), [182.0]);
    // The command line's list replaces the job file's.
    let report = plan(dir.path(), &["--job", "job.toml", "--skip-layers", "DIMS"]);
    assert_eq!(holes_cut(&report), [110.0]);
    fs::write(
        dir.path().join("bad.toml"),
        "units = \"mm\"\ncut_layers = \"PLATE\"\n[[feature]]\nname = \"b\"\nbay = \"bay 1\"\n",
    )
    .unwrap();
    let out = conicut()
        .current_dir(dir.path())
        .args([
            "plan",
            "layers.dxf",
            "--machine",
            &mill(),
            "--tool-diameter",
            "3",
            "--job",
            "bad.toml",
        ])
        .output()
        .unwrap();
    assert!(!out.status.success());
    let message = String::from_utf8_lossy(&out.stderr);
    assert!(message.contains("list of layer names"), "{message}");
}

#[test]
fn a_bay_layer_that_holds_no_bays_is_a_warning_and_one_that_does_not_exist_a_refusal() {
    let dir = tempfile::tempdir().unwrap();
    write(&dir.path().join("layers.dxf"));
    // A layer the drawing has (layer 0, empty here), without closed loops of straight sides:
    // a warning.
    let report = plan(dir.path(), &["--bay-layer", "0"]);
    let warnings = report["warnings"].to_string();
    assert!(
        warnings.contains("no bays were found (layer \\\"0\\\" holds no closed loop"),
        "{warnings}"
    );
    assert!(
        warnings.contains("OPENING-BAYS"),
        "the layers listed: {warnings}"
    );
    // A layer it does not have: a misspelling, refused with the layers listed (the bays would
    // otherwise be cut as sharp-cornered holes), nothing written.
    let machine = mill();
    let run = conicut()
        .current_dir(dir.path())
        .args([
            "plan",
            "layers.dxf",
            "--machine",
            &machine,
            "--tool-diameter",
            "3",
        ])
        .args(["--out", "refused", "--bay-layer", "BAYS"])
        .assert()
        .failure();
    let message = String::from_utf8_lossy(&run.get_output().stderr).into_owned();
    assert!(
        message.contains("no layer \"BAYS\"") && message.contains("OPENING-BAYS"),
        "{message}"
    );
    assert!(!dir.path().join("refused").exists());
}
