//! The stable fuzz harness: every fuzz target (`support/fuzz_targets.rs`) run on its seed inputs,
//! on every saved regression input (`tests/fuzz-regressions/TARGET/*`, each an input a fuzzer
//! once crashed on), and on repeatable mutations of the seeds: bits flipped, bytes replaced,
//! stretches deleted, repeated or cut off, tokens that readers stumble on put in, numbers swapped
//! for extreme ones. A failure prints the seed, the run and the mutated input's file, to be
//! saved as a regression.
//!
//! Runs per target: `CONICUT_FUZZ_RUNS` (default 150, a few seconds in CI). The long run, off
//! CI: `CONICUT_FUZZ_RUNS=200000 cargo test --release --test fuzz_harness`, or the coverage-guided
//! targets under `fuzz/` with `cargo fuzz` (DEVELOPERS.md).

#[path = "support/fuzz_targets.rs"]
mod fuzz_targets;

use conicut::geom::random::XorShift;
use std::fs;
use std::panic::{AssertUnwindSafe, catch_unwind};
use std::path::Path;

/// Tokens that readers of each kind of text stumble on.
const DXF_TOKENS: &[&str] = &[
    "\n  0\nEOF\n",
    "\n  0\nSECTION\n  2\nENTITIES\n",
    "\n  0\nENDSEC\n",
    "\n  0\nLINE\n  8\n0\n 10\n1e308\n 20\n-1e308\n 11\nnan\n 21\ninf\n",
    "\n  0\nLWPOLYLINE\n 90\n999999999\n",
    "\n  0\nINSERT\n  2\n*X\n",
    "\n  9\n$TDUPDATE\n 40\n1e300\n",
    "\n  9\n$INSUNITS\n 70\n-7\n",
    "1e308",
    "-0",
    "nan",
    "99999999999999999999",
    "\r\n",
    "\u{feff}",
    "\0",
];
const TOML_TOKENS: &[&str] = &[
    "=",
    "[",
    "]",
    "[[",
    "]]",
    "\"",
    "'''",
    "nan",
    "inf",
    "-inf",
    "-1",
    "0",
    "1e309",
    "1e-320",
    "\n[[feature]]\n",
    "\n[travel]\n",
    "\nname = \"x\"\n",
    "true",
    "{",
    "}",
    "#",
    "\u{feff}",
    "18446744073709551616",
];
const GCODE_TOKENS: &[&str] = &[
    "G2",
    "G3",
    "G91",
    "G90.1",
    "G20",
    "G4 P",
    "R",
    "I",
    "J",
    "X",
    "Z-",
    "F0",
    "F1e9",
    "S-1",
    "(",
    ")",
    ";",
    "/",
    "%",
    "N",
    "M30",
    "M2",
    "M3",
    "M5",
    "1e5",
    "-0",
    "9999999999999999999",
    ".",
    "\n",
    "\r\n",
    "G0 Z-5 X300",
    "G17 G18",
    "T1 M6",
    "O100",
];
/// Numbers put in place of a number of the input.
const NUMBERS: &[&str] = &[
    "0",
    "-0",
    "1e308",
    "-1e308",
    "1e-320",
    "nan",
    "inf",
    "4294967296",
    "-2147483649",
    "0.0000001",
    "123456789012345678901234567890",
];

fn runs() -> usize {
    std::env::var("CONICUT_FUZZ_RUNS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(150)
}

/// One mutation of `input` (see the module docs).
fn mutate(input: &mut Vec<u8>, rng: &mut XorShift, tokens: &[&str]) {
    let pick = |rng: &mut XorShift, n: usize| (rng.next_u64() % n.max(1) as u64) as usize;
    let len = input.len();
    match pick(rng, 8) {
        0 if len > 0 => {
            let at = pick(rng, len);
            input[at] ^= 1 << pick(rng, 8);
        }
        1 if len > 0 => {
            let at = pick(rng, len);
            input[at] = rng.next_u64() as u8;
        }
        2 if len > 0 => {
            let at = pick(rng, len);
            let n = 1 + pick(rng, 64.min(len - at));
            input.drain(at..(at + n).min(len));
        }
        3 if len > 0 => {
            let at = pick(rng, len);
            let n = 1 + pick(rng, 256.min(len - at));
            let copy: Vec<u8> = input[at..(at + n).min(len)].to_vec();
            let to = pick(rng, input.len());
            input.splice(to..to, copy);
        }
        4 if len > 0 => input.truncate(pick(rng, len)),
        5 => {
            // A number swapped for an extreme one.
            let starts: Vec<usize> = (0..len)
                .filter(|&i| {
                    input[i].is_ascii_digit() && (i == 0 || !input[i - 1].is_ascii_digit())
                })
                .collect();
            if !starts.is_empty() {
                let at = starts[pick(rng, starts.len())];
                let end = (at..len)
                    .find(|&i| !(input[i].is_ascii_digit() || input[i] == b'.'))
                    .unwrap_or(len);
                let n = NUMBERS[pick(rng, NUMBERS.len())].as_bytes();
                input.splice(at..end, n.iter().copied());
            }
        }
        _ => {
            let token = tokens[pick(rng, tokens.len())].as_bytes();
            let at = pick(rng, len + 1);
            input.splice(at..at, token.iter().copied());
        }
    }
}

/// Runs `target` on the seeds, the saved regressions of `name` and `runs()` mutations.
fn fuzz(name: &str, target: fn(&[u8]), seeds: &[Vec<u8>], tokens: &[&str]) {
    let saved = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fuzz-regressions")
        .join(name);
    let mut inputs: Vec<(String, Vec<u8>)> = seeds
        .iter()
        .enumerate()
        .map(|(k, s)| (format!("seed {k}"), s.clone()))
        .collect();
    if let Ok(entries) = fs::read_dir(&saved) {
        for e in entries.flatten() {
            if e.path().extension().is_some_and(|x| x == "md") {
                continue;
            }
            inputs.push((e.path().display().to_string(), fs::read(e.path()).unwrap()));
        }
    }
    let mut rng = XorShift::new(name.len() as u64 * 7919 + 1);
    for run in 0..runs() {
        let k = (rng.next_u64() % seeds.len() as u64) as usize;
        let mut input = seeds[k].clone();
        for _ in 0..1 + rng.next_u64() % 4 {
            mutate(&mut input, &mut rng, tokens);
        }
        inputs.push((format!("run {run} (mutated seed {k})"), input));
    }
    let total = inputs.len();
    for (what, input) in inputs {
        if catch_unwind(AssertUnwindSafe(|| target(&input))).is_err() {
            let keep = std::env::temp_dir().join(format!("conicut-fuzz-{name}-failure"));
            let _ = fs::write(&keep, &input);
            panic!(
                "fuzz target {name} failed on {what}; the input is in {} (save it under \
                 tests/fuzz-regressions/{name}/)",
                keep.display()
            );
        }
    }
    eprintln!("fuzz target {name}: {total} inputs, no failure");
}

fn read(path: &str) -> Vec<u8> {
    fs::read(Path::new(env!("CARGO_MANIFEST_DIR")).join(path)).unwrap()
}

#[test]
fn dxf_reading_survives_any_input() {
    let demo = conicut::demo::demo_dxf_bytes();
    let crlf = String::from_utf8_lossy(&demo)
        .replace('\n', "\r\n")
        .into_bytes();
    let mut bom = "\u{feff}".as_bytes().to_vec();
    bom.extend_from_slice(&demo);
    let sheet = conicut::demo::sheet::sheet_dxf(12, 3).into_bytes();
    fuzz(
        "dxf",
        fuzz_targets::dxf,
        &[demo, crlf, bom, sheet],
        DXF_TOKENS,
    );
}

#[test]
fn job_files_survive_any_input() {
    fuzz(
        "job",
        fuzz_targets::job,
        &[
            read("demo-parts/truss-bracket-job.toml"),
            read("demo-parts/truss-bracket-pocket-job.toml"),
        ],
        TOML_TOKENS,
    );
}

#[test]
fn profiles_survive_any_input() {
    let seeds: Vec<Vec<u8>> = conicut::settings::BUNDLED_PROFILES
        .iter()
        .map(|(_, text)| text.as_bytes().to_vec())
        .collect();
    fuzz("profile", fuzz_targets::profile, &seeds, TOML_TOKENS);
}

#[test]
fn the_checker_survives_any_program() {
    let seeds: Vec<Vec<u8>> = ["metric-mill", "inch-router", "laser"]
        .iter()
        .map(|p| read(&format!("tests/snapshots/{p}.ngc")))
        .collect();
    fuzz("gcode", fuzz_targets::gcode, &seeds, GCODE_TOKENS);
}

#[test]
fn the_checker_s_pictures_survive_any_program() {
    let seeds: Vec<Vec<u8>> = ["metric-mill", "inch-router", "laser"]
        .iter()
        .map(|p| read(&format!("tests/snapshots/{p}.ngc")))
        .collect();
    fuzz("gcode", fuzz_targets::gcode_pictures, &seeds, GCODE_TOKENS);
}
