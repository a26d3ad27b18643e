//! Reading a written program back with the outside `gcode` crate (an RS274 parser that shares no
//! code with conicut), and following its moves with a small interpreter of our own: modal
//! position, G20/G21, absolute XYZ, centre-format arcs with I and J from the arc start
//! (NISTIR 6556 §3.5.3.2), F words; the cut comments `(cut K of N: NAME)` and every other comment
//! as a mark of the moves that follow it.
//!
//! Precision: the gcode crate holds values as `f32`, about 1e-5 mm at the demo's coordinates
//! (≤ 240 mm). Checks on what is read back here allow at least 1e-4 mm for it.

#![allow(dead_code)]

/// One move of the machine as read back, in millimetres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReadMove {
    /// 1-based line of the program.
    pub line: usize,
    pub rapid: bool,
    pub from: [f64; 3],
    pub to: [f64; 3],
    /// The arc's centre (XY, mm) and whether it runs counter-clockwise (G3), for G2/G3.
    pub arc: Option<([f64; 2], bool)>,
    /// Feed rate in mm/min (0 for rapids).
    pub feed: f64,
}

/// A program as read back.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadBack {
    pub moves: Vec<ReadMove>,
    /// Features by the name of their cut comment, with the index of their first move.
    pub features: Vec<(String, usize)>,
    /// Every comment, trimmed, with the index of the move that follows it.
    pub marks: Vec<(String, usize)>,
}

fn literal(v: &gcode::Value) -> f64 {
    match v {
        gcode::Value::Literal(x) => *x as f64,
        other => panic!("a value that is not a number: {other:?}"),
    }
}

/// Reads `program` with the gcode crate and follows its moves. Panics (a test failure) on what
/// conicut never writes: words outside a code, an arc without I and J, a move before G20/G21.
pub fn read_back(program: &str) -> ReadBack {
    let parsed = gcode::parse(program).expect("the gcode crate parses the program");
    let mut out = ReadBack {
        moves: Vec::new(),
        features: Vec::new(),
        marks: Vec::new(),
    };
    let mut scale: Option<f64> = None;
    let mut pos = [0.0f64; 3];
    let mut feed = 0.0;
    for block in &parsed.blocks {
        assert!(
            block.word_addresses.is_empty(),
            "words outside a code: {block:?}"
        );
        for c in &block.comments {
            let text = c.value.trim_start_matches(['(', ';']).trim_end_matches(')');
            let text = text.trim().to_string();
            if let Some((_, name)) = text.strip_prefix("cut ").and_then(|r| r.split_once(": ")) {
                out.features.push((name.to_string(), out.moves.len()));
            }
            out.marks.push((text, out.moves.len()));
        }
        for code in &block.codes {
            let gcode::Code::General(g) = code else {
                continue;
            };
            let major = g.number.major();
            match major {
                20 => scale = Some(25.4),
                21 => scale = Some(1.0),
                0..=3 if g.number.minor().is_none() => {
                    let arg = |l: char| {
                        g.args
                            .iter()
                            .find(|a| a.letter.eq_ignore_ascii_case(&l))
                            .map(|a| literal(&a.value))
                    };
                    let s = scale.expect("a move after the units word (G20 or G21)");
                    if let Some(f) = arg('F') {
                        feed = f * s;
                    }
                    let target: Vec<Option<f64>> = ['X', 'Y', 'Z'].into_iter().map(arg).collect();
                    if target.iter().all(Option::is_none) {
                        continue;
                    }
                    let mut to = pos;
                    for (k, v) in target.iter().enumerate() {
                        if let Some(v) = v {
                            to[k] = v * s;
                        }
                    }
                    let arc = (major >= 2).then(|| {
                        let i = arg('I').expect("arcs carry I") * s;
                        let j = arg('J').expect("arcs carry J") * s;
                        ([pos[0] + i, pos[1] + j], major == 3)
                    });
                    out.moves.push(ReadMove {
                        line: block.span.line + 1,
                        rapid: major == 0,
                        from: pos,
                        to,
                        arc,
                        feed: if major == 0 { 0.0 } else { feed },
                    });
                    pos = to;
                }
                _ => {}
            }
        }
    }
    out
}

/// The moves of the feature at `idx` in `read.features`: from its cut comment to the next one.
pub fn feature_range_at(read: &ReadBack, idx: usize) -> std::ops::Range<usize> {
    let first = read.features[idx].1;
    let last = read.features.get(idx + 1).map_or(read.moves.len(), |f| f.1);
    first..last
}

/// The indices of feature `name`'s moves that follow a comment `mark` (up to the next comment),
/// in order; empty when there is no such feature.
pub fn marked_moves(read: &ReadBack, name: &str, mark: &str) -> Vec<usize> {
    let Some(idx) = read.features.iter().position(|(n, _)| n == name) else {
        return Vec::new();
    };
    let range = feature_range_at(read, idx);
    // Walk the moves with the comment in force before each (the last one written before it).
    let mut marks = read.marks.iter().peekable();
    let mut in_force: Option<&str> = None;
    let mut out = Vec::new();
    for k in 0..range.end {
        while let Some((text, at)) = marks.peek()
            && *at <= k
        {
            in_force = Some(text.as_str());
            marks.next();
        }
        if k >= range.start && in_force == Some(mark) {
            out.push(k);
        }
    }
    out
}

/// The moves of feature `name`'s contour, one run per pass: each run from a `(contour)` comment
/// through the `(tab)` and `(contour)` comments that continue it (a tab interrupts the contour
/// and the contour goes on after it), up to the next other comment.
pub fn contour_runs(read: &ReadBack, name: &str) -> Vec<Vec<usize>> {
    let Some(idx) = read.features.iter().position(|(n, _)| n == name) else {
        return Vec::new();
    };
    let range = feature_range_at(read, idx);
    let marks: Vec<&(String, usize)> = read
        .marks
        .iter()
        .filter(|(_, at)| range.contains(at))
        .collect();
    let mut runs: Vec<Vec<usize>> = Vec::new();
    let mut previous = "";
    for (k, (text, at)) in marks.iter().enumerate() {
        let end = marks.get(k + 1).map_or(range.end, |m| m.1).min(range.end);
        let continues = (text == "tab" && (previous == "contour" || previous == "tab"))
            || (text == "contour" && previous == "tab");
        match runs.last_mut() {
            Some(run) if continues => run.extend(*at..end),
            _ if text == "contour" => runs.push((*at..end).collect()),
            _ => {}
        }
        previous = text.as_str();
    }
    runs
}
