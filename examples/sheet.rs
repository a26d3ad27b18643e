//! Writes a generated sheet (see `conicut::demo::sheet`): `cargo run --release --example sheet
//! -- BAYS [SEED] > sheet.dxf`, e.g. 10000 bays for the scale benchmark.

use std::io::Write;

fn main() {
    let mut args = std::env::args().skip(1);
    let parse = |a: Option<String>, default: u64, what: &str| -> u64 {
        match a {
            None => default,
            Some(text) => text.parse().unwrap_or_else(|_| {
                eprintln!("sheet: {what} must be a whole number, got {text:?}");
                std::process::exit(2)
            }),
        }
    };
    let bays = parse(args.next(), 1000, "the number of bays") as usize;
    let seed = parse(args.next(), 1, "the seed");
    let text = conicut::demo::sheet::sheet_dxf(bays, seed);
    let (w, h) = conicut::demo::sheet::plate_size(bays);
    eprintln!("sheet: {bays} bays on a {w} × {h} mm plate, seed {seed}");
    if let Err(e) = std::io::stdout().write_all(text.as_bytes()) {
        eprintln!("sheet: cannot write the drawing: {e}");
        std::process::exit(1);
    }
}
