//! What the `dxf` crate is given: the file's text with the parts conicut does not use left out,
//! so that a field it never reads cannot stop (or crash) the reading.
//!
//! The crate parses everything it knows, and some fields it parses can fail on drawings that
//! general-purpose writers produce: header dates ($TDCREATE, $TDUPDATE, $TDINDWG, …) with
//! out-of-range values make it panic inside its date library, and an R12 dimension style naming
//! an arrow block (DIMSTYLE group 5, the block name in R12 but a handle in later versions) is a
//! parse error. conicut needs, of the header, only `$ACADVER` (which version's rules apply),
//! `$INSUNITS` (read by the scan in [`super::raw`] anyway) and `$HANDSEED`; of the tables, only
//! LAYER (names) and BLOCK_RECORD (which blocks exist); then the BLOCKS and ENTITIES sections.
//! Everything else (other header variables, the other tables, CLASSES, OBJECTS,
//! THUMBNAILIMAGE) is dropped before the crate sees it.
//!
//! The kept text keeps the original lines' order; [`Prepared::original_line`] maps a line of
//! it back to the file's, for the crate's error messages.

/// Header variables kept for the crate.
pub const KEPT_HEADER_VARIABLES: [&str; 3] = ["$ACADVER", "$INSUNITS", "$HANDSEED"];

/// Tables kept for the crate.
pub const KEPT_TABLES: [&str; 2] = ["LAYER", "BLOCK_RECORD"];

/// Sections kept whole.
const KEPT_SECTIONS: [&str; 2] = ["BLOCKS", "ENTITIES"];

/// The text for the crate, and where each of its lines came from.
pub(super) struct Prepared {
    pub(super) text: Vec<u8>,
    /// `lines[k]` is the 1-based line of the file that line `k + 1` of `text` came from.
    lines: Vec<usize>,
}

impl Prepared {
    /// The file's line for line `line` (1-based) of the prepared text.
    pub(super) fn original_line(&self, line: usize) -> usize {
        line.checked_sub(1)
            .and_then(|k| self.lines.get(k))
            .copied()
            .unwrap_or(line)
    }
}

/// Where the walk is.
#[derive(Clone, Copy, PartialEq)]
enum At {
    /// Between sections: `0 SECTION`, `0 EOF`.
    Top,
    /// Right after `0 SECTION`, before its `2 NAME`.
    SectionName,
    Header,
    Tables,
    /// A section kept whole.
    Kept,
    /// A section dropped whole.
    Dropped,
}

/// The text with the unused parts left out (module docs). Text that is not a sequence of
/// group-code/value pairs from some point on is passed on unchanged from there (the crate then
/// reports it).
///
/// Works on bytes: a file in a Windows code page passes through unchanged, to be decoded by the
/// crate as before (only ASCII group codes and names are compared here).
pub(super) fn prepare(bytes: &[u8]) -> Prepared {
    let lines: Vec<&[u8]> = bytes.split(|&b| b == b'\n').collect();
    let trimmed = |k: usize| -> &str {
        lines
            .get(k)
            .and_then(|l| std::str::from_utf8(l.trim_ascii()).ok())
            .unwrap_or("")
    };
    let code_of = |k: usize| -> Option<i32> { trimmed(k).parse().ok() };
    let value_of = |k: usize| -> &str { trimmed(k) };
    let mut out = Prepared {
        text: Vec::with_capacity(bytes.len()),
        lines: Vec::new(),
    };
    let keep = |out: &mut Prepared, k: usize| {
        out.text.extend_from_slice(lines[k]);
        out.text.push(b'\n');
        out.lines.push(k + 1);
    };
    let mut at = At::Top;
    // Inside the header: whether the current variable is kept. In the tables: whether the
    // current table is kept, and whether the next pair names it.
    let mut keep_variable = false;
    let mut keep_table = true;
    let mut table_name_next = false;
    let mut k = 0;
    while k + 1 < lines.len() {
        let Some(code) = code_of(k) else {
            // Not a pair: hand the rest over as it is.
            for j in k..lines.len() {
                keep(&mut out, j);
            }
            return out;
        };
        let value = value_of(k + 1);
        let pair_kept = match (at, code) {
            (_, 0) if value == "SECTION" => {
                at = At::SectionName;
                // Held back until the section's name says whether it is kept.
                false
            }
            (At::SectionName, 2) => {
                at = match value {
                    "HEADER" => At::Header,
                    "TABLES" => At::Tables,
                    v if KEPT_SECTIONS.contains(&v) => At::Kept,
                    _ => At::Dropped,
                };
                if at != At::Dropped {
                    push_pair(&mut out, "0", "SECTION", k - 1);
                }
                at != At::Dropped
            }
            (_, 0) if value == "ENDSEC" => {
                let was = at;
                at = At::Top;
                was != At::Dropped
            }
            (At::Dropped, _) => false,
            (At::Header, 9) => {
                keep_variable = KEPT_HEADER_VARIABLES.contains(&value);
                keep_variable
            }
            (At::Header, _) => keep_variable,
            (At::Tables, 0) if value == "TABLE" => {
                table_name_next = true;
                keep_table = true;
                // Decided with the table's name, next.
                false
            }
            (At::Tables, 2) if table_name_next => {
                table_name_next = false;
                keep_table = KEPT_TABLES.contains(&value);
                if keep_table {
                    // The `0 TABLE` held back, then this name.
                    push_pair(&mut out, "0", "TABLE", k - 1);
                }
                keep_table
            }
            (At::Tables, 0) if value == "ENDTAB" => {
                let kept = keep_table;
                keep_table = true;
                kept
            }
            (At::Tables, _) => keep_table && !table_name_next,
            _ => true,
        };
        if pair_kept {
            keep(&mut out, k);
            keep(&mut out, k + 1);
        }
        k += 2;
    }
    // A last line that is not a whole pair (the empty text after the final newline).
    for (j, line) in lines.iter().enumerate().skip(k) {
        if !line.is_empty() {
            keep(&mut out, j);
        }
    }
    out
}

/// Appends a pair written here (a held-back `0 SECTION` or `0 TABLE`), as from the file's lines
/// `line` and `line + 1`.
fn push_pair(out: &mut Prepared, code: &str, value: &str, line: usize) {
    out.text.extend_from_slice(code.as_bytes());
    out.text.push(b'\n');
    out.text.extend_from_slice(value.as_bytes());
    out.text.push(b'\n');
    out.lines.push(line);
    out.lines.push(line + 1);
}

#[cfg(test)]
mod tests {
    use super::*;

    const FILE: &str = "0\nSECTION\n2\nHEADER\n9\n$ACADVER\n1\nAC1009\n9\n$TDUPDATE\n40\n-1e300\n\
9\n$INSUNITS\n70\n4\n0\nENDSEC\n\
0\nSECTION\n2\nTABLES\n0\nTABLE\n2\nDIMSTYLE\n70\n1\n0\nDIMSTYLE\n2\nSTANDARD\n5\nARCHTICK\n0\nENDTAB\n\
0\nTABLE\n2\nLAYER\n70\n1\n0\nLAYER\n2\nPLATE\n70\n0\n62\n7\n0\nENDTAB\n0\nENDSEC\n\
0\nSECTION\n2\nOBJECTS\n0\nDICTIONARY\n5\nC\n0\nENDSEC\n\
0\nSECTION\n2\nENTITIES\n0\nCIRCLE\n8\nPLATE\n10\n1\n20\n2\n40\n3\n0\nENDSEC\n0\nEOF\n";

    #[test]
    fn keeps_what_conicut_reads_and_maps_lines_back() {
        let p = prepare(FILE.as_bytes());
        let text = String::from_utf8(p.text.clone()).unwrap();
        assert!(text.contains("$ACADVER\n1\nAC1009"));
        assert!(text.contains("$INSUNITS\n70\n4"));
        for gone in ["$TDUPDATE", "DIMSTYLE", "ARCHTICK", "OBJECTS", "DICTIONARY"] {
            assert!(!text.contains(gone), "{gone} left in:\n{}", text);
        }
        for kept in [
            "0\nTABLE\n2\nLAYER\n",
            "2\nPLATE\n70\n0\n62\n7",
            "0\nCIRCLE\n8\nPLATE",
        ] {
            assert!(text.contains(kept), "{kept:?} missing:\n{}", text);
        }
        // Each kept line maps to the same text in the file.
        let file: Vec<&str> = FILE.split('\n').collect();
        for (k, line) in text.lines().enumerate() {
            let original = p.original_line(k + 1);
            assert_eq!(file[original - 1].trim(), line.trim(), "line {}", k + 1);
        }
        // The crate reads the result.
        let d = dxf::Drawing::load(&mut p.text.as_slice()).expect("the crate reads it");
        assert_eq!(d.entities().count(), 1);
        assert!(d.layers().any(|l| l.name == "PLATE"));
    }
}
