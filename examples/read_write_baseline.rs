//! The scale benchmark's baseline: read a DXF with the `dxf` crate and write as many bytes as
//! the file holds, the least any tool that reads a drawing and writes a program must do.
//! `cargo run --release --example read_write_baseline -- DRAWING.dxf OUT_FILE`; prints the
//! entity count and the bytes written.

use std::io::Write;

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let [drawing, out] = args.as_slice() else {
        eprintln!("usage: read_write_baseline DRAWING.dxf OUT_FILE");
        std::process::exit(2);
    };
    let bytes = std::fs::read(drawing).unwrap_or_else(|e| {
        eprintln!("cannot read {drawing}: {e}");
        std::process::exit(1)
    });
    let loaded = dxf::Drawing::load(&mut bytes.as_slice()).unwrap_or_else(|e| {
        eprintln!("cannot load {drawing}: {e}");
        std::process::exit(1)
    });
    let entities = loaded.entities().count();
    let mut file = std::fs::File::create(out).unwrap_or_else(|e| {
        eprintln!("cannot create {out}: {e}");
        std::process::exit(1)
    });
    // One line per entity, padded so that the total matches the drawing's size.
    let line = [b'x'; 63];
    let mut written = 0usize;
    while written < bytes.len() {
        let n = (bytes.len() - written).min(64);
        let ok = file
            .write_all(&line[..n - 1])
            .and_then(|_| file.write_all(b"\n"));
        if let Err(e) = ok {
            eprintln!("cannot write {out}: {e}");
            std::process::exit(1);
        }
        written += n;
    }
    println!("{entities} entities read, {written} bytes written");
}
