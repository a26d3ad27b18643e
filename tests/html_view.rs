//! `conicut check … --html FILE`: the interactive page, read as data and run in a real browser.
//!
//! The program is the one `conicut plan` writes for the bundled demo drawing on the metric mill
//! with a 6 mm tool; the moves the page should show are found independently, by reading the
//! program back with the outside `gcode` crate (`support/gcode_read.rs`), never through
//! conicut's own reader.
//!
//! The browser is Debian's `chromium`, headless (`--dump-dom` after the page has run, with
//! `--enable-logging=stderr`, which prints every console message as an `INFO:CONSOLE` line).
//! When it is not installed the browser tests say so loudly and pass; `.ci/run` installs it
//! when missing and, once it is there, sets `CONICUT_REQUIRE_BROWSER=1`, which turns a browser
//! that cannot be found into a failure (when the install fails, the tests skip loudly, as the
//! issue allows).
//! `CONICUT_BROWSER` names another binary of the same kind.

#[path = "support/gcode_read.rs"]
mod gcode_read;

use assert_cmd::Command;
use gcode_read::{ReadBack, read_back};
use std::fs;
use std::path::{Path, PathBuf};
use std::process::Stdio;

fn demo_drawing() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-parts/truss-bracket.dxf")
}

/// Plans the demo into `dir`, checks the program with `--html`; the program's text and the
/// page's path.
fn plan_and_view(dir: &Path) -> (String, PathBuf) {
    Command::cargo_bin("conicut")
        .unwrap()
        .args([
            "plan",
            "--machine",
            "metric-mill",
            "--tool-diameter",
            "6",
            "--out",
        ])
        .arg(dir.join("out"))
        .arg(demo_drawing())
        .assert()
        .success();
    let program_path = dir.join("out/truss-bracket.nc");
    let page = dir.join("view.html");
    view(&program_path, &page).success();
    (fs::read_to_string(&program_path).unwrap(), page)
}

fn view(program: &Path, page: &Path) -> assert_cmd::assert::Assert {
    Command::cargo_bin("conicut")
        .unwrap()
        .arg("check")
        .arg(program)
        .arg("--against")
        .arg(demo_drawing())
        .args(["--machine", "metric-mill", "--tool-diameter", "6", "--html"])
        .arg(page)
        .assert()
}

/// The JSON the page carries.
fn page_data(html: &str) -> serde_json::Value {
    let open = r#"<script id="data" type="application/json">"#;
    let start = html.find(open).expect("the data element") + open.len();
    let end = start + html[start..].find("</script>").expect("its end");
    serde_json::from_str(&html[start..end]).expect("the data is JSON")
}

fn numbers(v: &serde_json::Value) -> Vec<f64> {
    v.as_array()
        .expect("an array")
        .iter()
        .map(|x| x.as_f64().expect("a number"))
        .collect()
}

#[test]
fn the_page_is_self_contained_and_carries_the_program_move_by_move() {
    let dir = tempfile::tempdir().unwrap();
    let (program, page) = plan_and_view(dir.path());
    let html = fs::read_to_string(&page).unwrap();
    // Nothing fetched from anywhere: no addresses, no outside scripts, styles or images.
    for outside in ["http:", "https:", "<link", " src=", "@import", "url("] {
        assert!(
            !html.contains(outside),
            "the page refers outside: {outside}"
        );
    }
    let data = page_data(&html);
    let lines: Vec<&str> = program.lines().collect();
    let carried: Vec<&str> = data["lines"]
        .as_array()
        .unwrap()
        .iter()
        .map(|l| l.as_str().unwrap())
        .collect();
    assert_eq!(carried, lines, "every line of the program, as written");
    // The moves: as many as the outside reader finds, each on the same line, ending where it
    // ends (the page's points have four decimals; the gcode crate's f32 about 1e-5 mm here).
    let read = read_back(&program);
    let moves = &data["moves"];
    let on_line = numbers(&moves["line"]);
    assert_eq!(on_line.len(), read.moves.len());
    let start = numbers(&moves["start"]);
    let points = numbers(&moves["points"]);
    for (k, m) in read.moves.iter().enumerate() {
        assert_eq!(on_line[k] as usize, m.line, "move {k}");
        let end = start[k + 1] as usize;
        let (x, y) = (points[end - 2], points[end - 1]);
        assert!(
            (x - m.to[0]).abs() < 1e-3 && (y - m.to[1]).abs() < 1e-3,
            "move {k} ends at ({x}, {y}), read back ({}, {})",
            m.to[0],
            m.to[1]
        );
        assert_eq!(
            moves["rapid"][k].as_u64().unwrap() == 1,
            m.rapid,
            "move {k}"
        );
    }
    // The clock runs forward and ends at the estimate the check prints.
    let time = numbers(&moves["time"]);
    assert!(time.windows(2).all(|w| w[1] >= w[0]));
    let total = data["total"].as_f64().unwrap();
    assert!((time.last().unwrap() - total).abs() < 1e-3);
    // One switch per cut comment, in program order.
    let names: Vec<&str> = data["features"]
        .as_array()
        .unwrap()
        .iter()
        .map(|n| n.as_str().unwrap())
        .collect();
    let cut_names: Vec<&str> = read.features.iter().map(|(n, _)| n.as_str()).collect();
    assert_eq!(names, cut_names);
}

/// The browser to run, or `None` (after saying so) when there is none and none is required.
fn browser() -> Option<PathBuf> {
    let named = std::env::var_os("CONICUT_BROWSER").map(PathBuf::from);
    let found = named.or_else(|| {
        std::env::var_os("PATH").and_then(|path| {
            std::env::split_paths(&path)
                .map(|d| d.join("chromium"))
                .find(|p| p.is_file())
        })
    });
    if found.is_none() {
        assert!(
            std::env::var_os("CONICUT_REQUIRE_BROWSER").is_none(),
            "CONICUT_REQUIRE_BROWSER is set but no chromium was found on PATH"
        );
        eprintln!(
            "\n*** SKIPPED: the interactive page was not run in a browser: chromium is not \
             installed (apt-get install chromium, or set CONICUT_BROWSER) ***\n"
        );
    }
    found
}

/// What the browser shows after the page at `page` with address part `hash` has run: the DOM
/// and the console messages.
fn run_page(browser: &Path, page: &Path, hash: &str) -> (String, Vec<String>) {
    let profile = tempfile::tempdir().unwrap();
    let url = format!("file://{}#{hash}", page.display());
    let out = std::process::Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--no-first-run",
            "--enable-logging=stderr",
            "--v=0",
            "--window-size=1400,900",
            "--virtual-time-budget=5000",
        ])
        .arg(format!("--user-data-dir={}", profile.path().display()))
        .arg("--dump-dom")
        .arg(&url)
        .stdin(Stdio::null())
        .output()
        .expect("the browser runs");
    assert!(out.status.success(), "the browser failed on {url}");
    let console = String::from_utf8_lossy(&out.stderr)
        .lines()
        .filter(|l| l.contains(":CONSOLE"))
        .map(str::to_string)
        .collect();
    (String::from_utf8_lossy(&out.stdout).into_owned(), console)
}

/// The text of the element with id `id` in a dumped DOM, and its attributes' source.
fn element<'d>(dom: &'d str, id: &str) -> (&'d str, &'d str) {
    let at = dom
        .find(&format!("id=\"{id}\""))
        .unwrap_or_else(|| panic!("no element {id}"));
    let open_end = at + dom[at..].find('>').unwrap();
    let tag_start = dom[..at].rfind('<').unwrap();
    let text_end = open_end + dom[open_end..].find('<').unwrap();
    (&dom[tag_start..open_end], &dom[open_end + 1..text_end])
}

fn attribute<'d>(tag: &'d str, name: &str) -> Option<&'d str> {
    let at = tag.find(&format!(" {name}=\""))? + name.len() + 3;
    Some(&tag[at..at + tag[at..].find('"')?])
}

/// The dumped DOM unescaped where the page's text goes.
fn unescape(s: &str) -> String {
    s.replace("&lt;", "<")
        .replace("&gt;", ">")
        .replace("&quot;", "\"")
        .replace("&amp;", "&")
}

/// The page ran without an error, reported on the page or on the console.
fn assert_clean(dom: &str, console: &[String], what: &str) {
    assert!(console.is_empty(), "{what}: console messages {console:?}");
    let (tag, text) = element(dom, "errors");
    assert!(
        text.is_empty() && attribute(tag, "hidden").is_some(),
        "{what}: errors on the page: {text}"
    );
    assert!(
        dom.contains("data-ready=\"1\""),
        "{what}: the page did not finish"
    );
}

#[test]
fn in_a_browser_scrubbing_to_move_n_shows_its_line() {
    let Some(chromium) = browser() else { return };
    let dir = tempfile::tempdir().unwrap();
    let (program, page) = plan_and_view(dir.path());
    let read: ReadBack = read_back(&program);
    let lines: Vec<&str> = program.lines().collect();
    let m = read.moves.len();
    let data = page_data(&fs::read_to_string(&page).unwrap());
    let time = numbers(&data["moves"]["time"]);
    let total = data["total"].as_f64().unwrap();
    // The page's clock: minutes:seconds, rounded to the second.
    let clock = |t: f64| {
        let s = t.round() as u64;
        format!("{}:{:02}", s / 60, s % 60)
    };
    for n in [1, m / 3, m / 2 + 1, m] {
        let (dom, console) = run_page(&chromium, &page, &format!("move={n}"));
        assert_clean(&dom, &console, &format!("move {n}"));
        assert_eq!(element(&dom, "where").1, format!("move {n} of {m}"));
        assert_eq!(
            element(&dom, "clock").1,
            format!("t = {} of {} (estimate)", clock(time[n - 1]), clock(total))
        );
        // One switch per feature.
        assert_eq!(
            dom.matches("data-feature=").count(),
            read.features.len(),
            "move {n}"
        );
        let line = read.moves[n - 1].line;
        let (tag, text) = element(&dom, "current-line");
        assert_eq!(
            attribute(tag, "data-line"),
            Some(line.to_string().as_str()),
            "move {n}"
        );
        assert_eq!(
            unescape(text),
            format!("line {line}: {}", lines[line - 1]),
            "move {n}"
        );
        // The listing marks that line as the current one.
        assert!(
            dom.contains(&format!("class=\"row current\" data-line=\"{line}\"")),
            "move {n}: line {line} is not marked in the listing"
        );
    }
}

#[test]
fn in_a_browser_a_clicked_line_and_the_point_under_the_cursor_find_their_moves() {
    let Some(chromium) = browser() else { return };
    let dir = tempfile::tempdir().unwrap();
    let (program, page) = plan_and_view(dir.path());
    let read = read_back(&program);
    let m = read.moves.len();
    // A line with a move: the drawing up to and with its first move.
    let k = m / 2;
    let line = read.moves[k].line;
    let first = read.moves.iter().position(|mv| mv.line == line).unwrap();
    let (dom, console) = run_page(&chromium, &page, &format!("line={line}"));
    assert_clean(&dom, &console, "line");
    assert_eq!(
        element(&dom, "where").1,
        format!("move {} of {m}", first + 1)
    );
    // A comment line moves nothing, and says so.
    let comment = program
        .lines()
        .position(|l| l.starts_with("(contour)"))
        .unwrap()
        + 1;
    let (dom, console) = run_page(&chromium, &page, &format!("line={comment}"));
    assert_clean(&dom, &console, "comment line");
    assert!(
        unescape(element(&dom, "current-line").1)
            .starts_with(&format!("line {comment} moves nothing")),
        "{}",
        element(&dom, "current-line").1
    );
    // The cursor at the middle of the longest straight cutting move (the outline's long side,
    // far from every other move): the tip names its line.
    let (longest, mv) = read
        .moves
        .iter()
        .enumerate()
        .filter(|(_, mv)| !mv.rapid && mv.arc.is_none() && mv.from[2] < 0.0)
        .max_by(|a, b| {
            let l =
                |mv: &gcode_read::ReadMove| (mv.to[0] - mv.from[0]).hypot(mv.to[1] - mv.from[1]);
            l(a.1).total_cmp(&l(b.1))
        })
        .unwrap();
    let (x, y) = ((mv.from[0] + mv.to[0]) / 2.0, (mv.from[1] + mv.to[1]) / 2.0);
    let (dom, console) = run_page(&chromium, &page, &format!("point={x:.3},{y:.3}"));
    assert_clean(&dom, &console, "point");
    let (tag, text) = element(&dom, "tip");
    assert_eq!(
        attribute(tag, "data-line"),
        Some(read.moves[longest].line.to_string().as_str()),
        "the tip at ({x}, {y}): {text}"
    );
}

#[test]
fn in_a_browser_a_faulty_program_lists_its_finding_at_its_line() {
    let Some(chromium) = browser() else { return };
    let dir = tempfile::tempdir().unwrap();
    let (program, _) = plan_and_view(dir.path());
    // One feed word written with an exponent (NISTIR 6556 §3.3.2: numbers have none).
    let at = program
        .lines()
        .position(|l| l.contains(" F400.0"))
        .expect("a feed word");
    let faulty: Vec<String> = program
        .lines()
        .enumerate()
        .map(|(i, l)| {
            if i == at {
                l.replace(" F400.0", " F4.0E2")
            } else {
                l.to_string()
            }
        })
        .collect();
    let path = dir.path().join("faulty.nc");
    fs::write(&path, faulty.join("\n") + "\n").unwrap();
    let page = dir.path().join("faulty.html");
    view(&path, &page).code(1);
    let (dom, console) = run_page(&chromium, &page, "");
    assert_clean(&dom, &console, "faulty");
    let (_, list) = {
        let start = dom.find("id=\"findings\"").unwrap();
        let end = start + dom[start..].find("</ol>").unwrap();
        ((), &dom[start..end])
    };
    assert!(
        list.contains(&format!("line {} [exponent]", at + 1)),
        "the findings list: {list}"
    );
}

#[test]
fn plan_and_demo_write_the_page_beside_the_program_when_asked() {
    let dir = tempfile::tempdir().unwrap();
    let (program, checked_page) = plan_and_view(dir.path());
    let out = dir.path().join("with-page");
    Command::cargo_bin("conicut")
        .unwrap()
        .args([
            "plan",
            "--machine",
            "metric-mill",
            "--tool-diameter",
            "6",
            "--html",
            "--out",
        ])
        .arg(&out)
        .arg(demo_drawing())
        .assert()
        .success();
    // The same program as without --html, and its page shows the same moves as the one
    // `conicut check --html` makes of it.
    assert_eq!(
        fs::read_to_string(out.join("truss-bracket.nc")).unwrap(),
        program
    );
    let planned = page_data(&fs::read_to_string(out.join("truss-bracket.html")).unwrap());
    let checked = page_data(&fs::read_to_string(&checked_page).unwrap());
    for key in ["lines", "features", "edges", "moves", "total"] {
        assert_eq!(planned[key], checked[key], "{key}");
    }
    let report: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(out.join("truss-bracket-report.json")).unwrap())
            .unwrap();
    let files = report["files"].as_array().expect("the files written");
    assert!(
        files
            .iter()
            .any(|f| f["role"] == "view"
                && f["path"].as_str().unwrap().ends_with("truss-bracket.html")),
        "{files:?}"
    );
    // Without --html there is no page.
    assert!(!dir.path().join("out/truss-bracket.html").exists());
    // The demo too.
    let demo = dir.path().join("demo");
    Command::cargo_bin("conicut")
        .unwrap()
        .args(["demo", "--machine", "laser", "--html", "--out"])
        .arg(&demo)
        .assert()
        .success();
    let pages: Vec<_> = fs::read_dir(&demo)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.path().extension().is_some_and(|x| x == "html"))
        .collect();
    assert_eq!(pages.len(), 1, "one page in the demo's folder");
    let data = page_data(&fs::read_to_string(pages[0].path()).unwrap());
    assert!(!data["moves"]["line"].as_array().unwrap().is_empty());
}

/// `text` as a `data:` address (every byte outside letters and digits percent-encoded).
fn data_url(mime: &str, text: &str) -> String {
    let mut out = format!("data:{mime},");
    for b in text.bytes() {
        if b.is_ascii_alphanumeric() {
            out.push(b as char);
        } else {
            out.push_str(&format!("%{b:02X}"));
        }
    }
    out
}

/// The preview SVG drawn by the browser: every solved ellipse's stroke is found in the pixels
/// where the report puts the ellipse (its centre, semi-axes and angle), and not at its centre.
#[test]
fn in_a_browser_the_preview_draws_each_ellipse_where_the_report_puts_it() {
    let Some(chromium) = browser() else { return };
    let dir = tempfile::tempdir().unwrap();
    plan_and_view(dir.path());
    let svg = fs::read_to_string(dir.path().join("out/truss-bracket.svg")).unwrap();
    let report: serde_json::Value = serde_json::from_str(
        &fs::read_to_string(dir.path().join("out/truss-bracket-report.json")).unwrap(),
    )
    .unwrap();
    let view_box: Vec<f64> = {
        let at = svg.find("viewBox=\"").unwrap() + 9;
        svg[at..at + svg[at..].find('"').unwrap()]
            .split_whitespace()
            .map(|v| v.parse().unwrap())
            .collect()
    };
    // Probes in SVG units (mm, y drawn as −y): eight points on each ellipse, then each centre.
    let mut on = Vec::new();
    let mut centres = Vec::new();
    for f in report["features"].as_array().unwrap() {
        let e = &f["ellipse"];
        if e.is_null() {
            continue;
        }
        let c = numbers(&e["center_mm"]);
        let (a, b) = (
            e["semi_major_mm"].as_f64().unwrap(),
            e["semi_minor_mm"].as_f64().unwrap(),
        );
        let phi = e["angle_deg"].as_f64().unwrap().to_radians();
        for k in 0..8 {
            let t = std::f64::consts::TAU * (k as f64 + 0.25) / 8.0;
            let (u, v) = (a * t.cos(), b * t.sin());
            let (x, y) = (
                c[0] + u * phi.cos() - v * phi.sin(),
                c[1] + u * phi.sin() + v * phi.cos(),
            );
            on.push([x, -y]);
        }
        centres.push([c[0], -c[1]]);
    }
    assert!(on.len() >= 32, "the demo's four ellipses");
    let probes: Vec<[f64; 2]> = on.iter().chain(&centres).copied().collect();
    let page = format!(
        r#"<!DOCTYPE html><html><body><pre id="errors" hidden></pre><pre id="out"></pre>
<script>
window.addEventListener('error', function (e) {{ var b = document.getElementById('errors'); b.hidden = false; b.textContent += e.message; }});
var box = {box:?}, probes = {probes:?}, S = 6;
var img = new Image();
img.onload = function () {{
  var c = document.createElement('canvas');
  c.width = Math.round(box[2] * S); c.height = Math.round(box[3] * S);
  var g = c.getContext('2d', {{ willReadFrequently: true }});
  g.drawImage(img, 0, 0, c.width, c.height);
  // The ellipse stroke's colour, #c0531a; for each probe the nearest colour within 3 px.
  var want = [0xc0, 0x53, 0x1a], out = [];
  probes.forEach(function (p) {{
    var px = Math.round((p[0] - box[0]) * S), py = Math.round((p[1] - box[1]) * S), best = 1e9;
    var d = g.getImageData(px - 3, py - 3, 7, 7).data;
    for (var i = 0; i < d.length; i += 4) {{
      var e = Math.hypot(d[i] - want[0], d[i + 1] - want[1], d[i + 2] - want[2]);
      if (e < best) best = e;
    }}
    out.push(Math.round(best));
  }});
  document.getElementById('out').textContent = JSON.stringify(out);
  document.body.dataset.ready = '1';
}};
img.onerror = function () {{ var b = document.getElementById('errors'); b.hidden = false; b.textContent += 'the SVG did not load'; }};
img.src = "{src}";
</script></body></html>"#,
        box = view_box,
        probes = probes,
        src = data_url("image/svg+xml", &svg),
    );
    let path = dir.path().join("pixels.html");
    fs::write(&path, page).unwrap();
    let (dom, console) = run_page(&chromium, &path, "");
    assert_clean(&dom, &console, "the preview");
    let found: Vec<f64> = serde_json::from_str(&unescape(element(&dom, "out").1)).unwrap();
    // Near the stroke's colour (antialiasing mixes it with what lies under and beside it).
    const NEAR: f64 = 60.0;
    let hits = found[..on.len()].iter().filter(|&&d| d <= NEAR).count();
    assert!(
        hits * 8 >= on.len() * 7,
        "only {hits} of {} points on the ellipses show the stroke: {found:?}",
        on.len()
    );
    assert!(
        found[on.len()..].iter().all(|&d| d > NEAR),
        "an ellipse's colour at a centre: {found:?}"
    );
}

/// An empty program, and one with moves but no cut comments: the page still loads cleanly,
/// shows its moves (none, or all without a feature) and lists the findings.
#[test]
fn in_a_browser_an_empty_program_and_one_without_features_load_cleanly() {
    let Some(chromium) = browser() else { return };
    let dir = tempfile::tempdir().unwrap();
    for (name, text, moves) in [
        ("empty.nc", "", 0),
        ("bare.nc", "G21 G90\nG0 X10 Y10\nG1 X20 F300\nM30\n", 2),
    ] {
        let program = dir.path().join(name);
        fs::write(&program, text).unwrap();
        let page = dir.path().join(format!("{name}.html"));
        view(&program, &page).code(1);
        let (dom, console) = run_page(&chromium, &page, "");
        assert_clean(&dom, &console, name);
        assert_eq!(
            element(&dom, "where").1,
            format!("move {moves} of {moves}"),
            "{name}"
        );
        assert_eq!(dom.matches("data-feature=").count(), 0, "{name}");
        assert!(
            dom.contains("<li class=\"must-fix\">"),
            "{name}: the findings listed"
        );
    }
}
