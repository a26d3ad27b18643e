//! A second, independent look at the file's text: the records of the ENTITIES section with
//! the line each starts on, their handles and layers, a check that every numeric value parses,
//! the `$INSUNITS` header value, and the LAYER table's states (frozen, off, not plotted), which
//! the crate does not keep whole.
//!
//! The `dxf` crate (0.6.2) stops reading the ENTITIES section at the first value it cannot parse
//! and may still return `Ok`, silently losing that entity and every one after it
//! (`CRATES.md` §2, gotcha 3). This scan is what lets [`super::read_dxf`] notice, and name the
//! line.

/// One record of the ENTITIES section, with the records the crate folds into it.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct RawRecord {
    /// The entity type as written after group code 0, e.g. `LINE`.
    pub kind: String,
    /// 1-based line number of the `0` group code that starts the record.
    pub line: usize,
    /// Group code 5, when present.
    pub handle: Option<String>,
    /// Group code 8, when present.
    pub layer: Option<String>,
    /// For a POLYLINE: the VERTEX records that follow it.
    pub vertices: usize,
    /// Group code 66 ("entities follow") was non-zero.
    pub entities_follow: bool,
}

/// A value that is not the number its group code calls for.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct BadValue {
    pub line: usize,
    pub code: i32,
    pub value: String,
    /// The record the value belongs to, if the scan had entered one.
    pub record: Option<RawRecord>,
}

/// What the scan found.
#[derive(Debug, Clone, Default, PartialEq)]
pub(super) struct RawScan {
    /// Top-level records of the ENTITIES section, in file order. VERTEX/SEQEND records after a
    /// POLYLINE, ATTRIB/SEQEND records after an INSERT with attributes, and an MTEXT right after
    /// an ATTRIB or ATTDEF are folded into the record before them, as the crate does.
    pub records: Vec<RawRecord>,
    /// Whether an ENTITIES section was found at all.
    pub has_entities_section: bool,
    /// The raw `$INSUNITS` value (group 70), if the header has one.
    pub insunits: Option<i64>,
    /// `$ACADVER` (group 1), e.g. `AC1009` for R12, if the header has one.
    pub version: Option<String>,
    /// The LAYER records of the TABLES section, in file order.
    pub layers: Vec<RawLayer>,
}

/// One LAYER record: its name (group 2), flags (70: bit 1 frozen), colour (62: negative when
/// the layer is off) and plot flag (290: 0 when it is not plotted), as written.
#[derive(Debug, Clone, Default, PartialEq)]
pub(super) struct RawLayer {
    pub name: String,
    pub line: usize,
    pub flags: i64,
    pub colour: i64,
    pub plotted: bool,
}

/// How the `dxf` crate parses the value of a group code (mirrors its `ExpectedType` table).
enum ValueKind {
    Float,
    Integer,
    Text,
}

fn value_kind(code: i32) -> ValueKind {
    match code {
        10..=59 | 110..=149 | 210..=239 | 460..=469 | 1010..=1059 => ValueKind::Float,
        // Shorts and booleans are parsed as f64 by the crate, so they are checked as floats.
        60..=79 | 170..=179 | 270..=299 | 370..=389 | 400..=409 | 1060..=1070 => ValueKind::Float,
        90..=99 | 160..=169 | 420..=429 | 440..=459 | 1071 => ValueKind::Integer,
        _ => ValueKind::Text,
    }
}

fn value_is_valid(code: i32, value: &str) -> bool {
    let v = value.trim();
    match value_kind(code) {
        ValueKind::Float => v.parse::<f64>().is_ok_and(f64::is_finite),
        ValueKind::Integer => v.parse::<i64>().is_ok(),
        ValueKind::Text => true,
    }
}

/// Scans the text of an ASCII DXF file. Stops quietly where the text stops being a sequence of
/// group-code/value pairs (the crate reports that itself); returns `Err` for a numeric value
/// inside the ENTITIES section that does not parse or is not finite.
pub(super) fn scan(text: &str) -> Result<RawScan, Box<BadValue>> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let lines: Vec<&str> = text
        .split('\n')
        .map(|l| l.strip_suffix('\r').unwrap_or(l))
        .collect();
    let mut scanner = Scanner::default();
    for (line_no, code, value) in pairs(&lines) {
        if !scanner.pair(line_no, code, value)? {
            break;
        }
    }
    let mut out = scanner.out;
    out.records = fold(scanner.flat);
    Ok(out)
}

/// The group-code/value pairs of `lines`, each with the 1-based line of its code, up to the first
/// line that is not a group code.
fn pairs<'a>(lines: &'a [&'a str]) -> impl Iterator<Item = (usize, i32, &'a str)> + 'a {
    let mut i = 0;
    std::iter::from_fn(move || {
        if i + 1 >= lines.len() {
            return None;
        }
        let code_line = lines[i].trim();
        if code_line.is_empty() {
            return None;
        }
        let code = code_line.parse::<i32>().ok()?;
        let pair = (i + 1, code, lines[i + 1]);
        i += 2;
        Some(pair)
    })
}

/// The scan's state between pairs.
#[derive(Default)]
struct Scanner<'a> {
    out: RawScan,
    flat: Vec<RawRecord>,
    section: Option<String>,
    expect_section_name: bool,
    last_header_variable: Option<&'a str>,
    /// Inside a LAYER record of the TABLES section.
    in_layer: bool,
}

impl<'a> Scanner<'a> {
    /// Takes one pair; `Ok(false)` at the end of the file.
    fn pair(&mut self, line_no: usize, code: i32, value: &'a str) -> Result<bool, Box<BadValue>> {
        if self.expect_section_name {
            self.expect_section_name = false;
            if code == 2 {
                let name = value.trim().to_string();
                self.out.has_entities_section |= name == "ENTITIES";
                self.section = Some(name);
                return Ok(true);
            }
        }
        if code == 0 {
            match value.trim() {
                "SECTION" => {
                    self.expect_section_name = true;
                    self.section = None;
                    return Ok(true);
                }
                "ENDSEC" => {
                    self.section = None;
                    return Ok(true);
                }
                "EOF" => return Ok(false),
                _ => {}
            }
        }
        match self.section.as_deref() {
            Some("HEADER") => self.header_pair(code, value),
            Some("ENTITIES") => self.entities_pair(line_no, code, value)?,
            Some("TABLES") => self.tables_pair(line_no, code, value),
            _ => {}
        }
        Ok(true)
    }

    /// A pair of the HEADER section: only `$INSUNITS` and `$ACADVER` are kept.
    fn header_pair(&mut self, code: i32, value: &'a str) {
        if code == 9 {
            self.last_header_variable = Some(value.trim());
        } else if code == 70 && self.last_header_variable == Some("$INSUNITS") {
            self.out.insunits = value.trim().parse::<f64>().ok().map(|v| v as i64);
        } else if code == 1 && self.last_header_variable == Some("$ACADVER") {
            self.out.version = Some(value.trim().to_string());
        }
    }

    /// A pair of the TABLES section: a LAYER record begins at `0 LAYER` (the table's own header
    /// is `0 TABLE`, `2 LAYER`), and its name, flags, colour and plot flag are kept. Values that
    /// do not parse are left at their defaults (visible), for the crate to report if it cares.
    fn tables_pair(&mut self, line_no: usize, code: i32, value: &str) {
        if code == 0 {
            self.in_layer = value.trim() == "LAYER";
            if self.in_layer {
                self.out.layers.push(RawLayer {
                    line: line_no,
                    plotted: true,
                    ..RawLayer::default()
                });
            }
            return;
        }
        if !self.in_layer {
            return;
        }
        let Some(layer) = self.out.layers.last_mut() else {
            return;
        };
        let int = || value.trim().parse::<f64>().ok().map(|v| v as i64);
        match code {
            2 => layer.name = value.trim().to_string(),
            70 => layer.flags = int().unwrap_or(0),
            62 => layer.colour = int().unwrap_or(7),
            290 => layer.plotted = int().is_none_or(|v| v != 0),
            _ => {}
        }
    }

    /// A pair of the ENTITIES section: a new record, or a value checked and, for the handle,
    /// layer and "entities follow" flag, kept.
    fn entities_pair(
        &mut self,
        line_no: usize,
        code: i32,
        value: &str,
    ) -> Result<(), Box<BadValue>> {
        if code == 0 {
            self.flat.push(RawRecord {
                kind: value.trim().to_string(),
                line: line_no,
                handle: None,
                layer: None,
                vertices: 0,
                entities_follow: false,
            });
            return Ok(());
        }
        if !value_is_valid(code, value) {
            return Err(Box::new(BadValue {
                line: line_no + 1,
                code,
                value: value.to_string(),
                record: self.flat.last().cloned(),
            }));
        }
        if let Some(rec) = self.flat.last_mut() {
            match code {
                5 => rec.handle = Some(value.trim().to_string()),
                8 => rec.layer = Some(value.to_string()),
                66 => rec.entities_follow = value.trim().parse::<f64>().is_ok_and(|v| v != 0.0),
                _ => {}
            }
        }
        Ok(())
    }
}

/// Folds sub-records into their owners the way the crate's entity collector does.
fn fold(flat: Vec<RawRecord>) -> Vec<RawRecord> {
    let mut out: Vec<RawRecord> = Vec::new();
    let mut it = flat.into_iter().peekable();
    while let Some(mut rec) = it.next() {
        match rec.kind.as_str() {
            "POLYLINE" => {
                while it.peek().is_some_and(|r| r.kind == "VERTEX") {
                    it.next();
                    rec.vertices += 1;
                }
                if it.peek().is_some_and(|r| r.kind == "SEQEND") {
                    it.next();
                }
            }
            "INSERT" if rec.entities_follow => {
                while it.peek().is_some_and(|r| r.kind == "ATTRIB") {
                    it.next();
                }
                if it.peek().is_some_and(|r| r.kind == "SEQEND") {
                    it.next();
                }
            }
            "ATTRIB" | "ATTDEF" if it.peek().is_some_and(|r| r.kind == "MTEXT") => {
                it.next();
            }
            _ => {}
        }
        out.push(rec);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    const SMALL: &str = "0\nSECTION\n2\nHEADER\n9\n$INSUNITS\n70\n4\n0\nENDSEC\n\
0\nSECTION\n2\nENTITIES\n\
0\nLINE\n5\n2A\n8\nCUT\n10\n0.0\n20\n0.0\n11\n1.0\n21\n0.0\n\
0\nPOLYLINE\n5\n2B\n8\nCUT\n66\n1\n10\n0\n20\n0\n\
0\nVERTEX\n8\nCUT\n10\n0\n20\n0\n0\nVERTEX\n8\nCUT\n10\n1\n20\n0\n0\nSEQEND\n8\nCUT\n\
0\nCIRCLE\n8\nCUT\n10\n5\n20\n5\n40\n1\n\
0\nENDSEC\n0\nEOF\n";

    #[test]
    fn finds_records_lines_handles_and_units() {
        let s = scan(SMALL).unwrap();
        assert!(s.has_entities_section);
        assert_eq!(s.insunits, Some(4));
        let kinds: Vec<&str> = s.records.iter().map(|r| r.kind.as_str()).collect();
        assert_eq!(kinds, ["LINE", "POLYLINE", "CIRCLE"]);
        assert_eq!(s.records[0].line, 15);
        assert_eq!(s.records[0].handle.as_deref(), Some("2A"));
        assert_eq!(s.records[1].vertices, 2);
        assert_eq!(s.records[2].handle, None);
        assert_eq!(s.records[2].layer.as_deref(), Some("CUT"));
    }

    #[test]
    fn reads_the_layer_table_states() {
        let text = "0\nSECTION\n2\nTABLES\n0\nTABLE\n2\nLAYER\n70\n3\n\
0\nLAYER\n2\nPLATE\n70\n0\n62\n7\n\
0\nLAYER\n2\nOLD\n70\n1\n62\n7\n\
0\nLAYER\n2\nHIDDEN\n70\n0\n62\n-3\n\
0\nLAYER\n2\nNOTES\n70\n0\n62\n2\n290\n0\n\
0\nENDTAB\n0\nENDSEC\n0\nSECTION\n2\nENTITIES\n0\nENDSEC\n0\nEOF\n";
        let scan = scan(text).unwrap();
        let states: Vec<(&str, i64, i64, bool)> = scan
            .layers
            .iter()
            .map(|l| (l.name.as_str(), l.flags, l.colour, l.plotted))
            .collect();
        assert_eq!(
            states,
            [
                ("PLATE", 0, 7, true),
                ("OLD", 1, 7, true),
                ("HIDDEN", 0, -3, true),
                ("NOTES", 0, 2, false)
            ]
        );
        assert_eq!(scan.layers[1].line, 19, "the line of its `0`");
    }

    #[test]
    fn names_the_line_of_a_bad_number() {
        let bad = SMALL.replace("40\n1\n", "40\nnot-a-number\n");
        let e = scan(&bad).unwrap_err();
        assert_eq!(e.code, 40);
        assert_eq!(e.value, "not-a-number");
        assert_eq!(bad.lines().nth(e.line - 1), Some("not-a-number"));
        assert_eq!(e.record.map(|r| r.kind), Some("CIRCLE".to_string()));
    }

    #[test]
    fn refuses_nan_and_infinity() {
        assert!(scan(&SMALL.replace("40\n1\n", "40\nNaN\n")).is_err());
        assert!(scan(&SMALL.replace("40\n1\n", "40\ninf\n")).is_err());
    }
}
