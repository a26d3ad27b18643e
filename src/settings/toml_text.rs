//! Line numbers and keys in TOML text, for messages that point at the line to fix (shared by
//! the job file and machine profile readers).

/// 1-based line number of a byte offset.
pub(crate) fn line_of_offset(text: &str, offset: usize) -> usize {
    text.as_bytes()[..offset.min(text.len())]
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
        + 1
}

/// The key assigned on a 1-based line (`key = value`), if any.
pub(crate) fn key_on_line(text: &str, line: usize) -> Option<String> {
    let l = text.lines().nth(line.checked_sub(1)?)?;
    let (key, _) = l.split_once('=')?;
    let key = key.trim().trim_matches('"');
    (!key.is_empty() && !key.starts_with('[')).then(|| key.to_string())
}

/// The table (e.g. `travel`) that a 1-based line belongs to; empty for the root table.
pub(crate) fn table_of_line(text: &str, line: usize) -> String {
    let mut table = String::new();
    for l in text.lines().take(line) {
        let t = l.trim();
        if t.starts_with('[') {
            table = t.trim_matches(|c| c == '[' || c == ']').trim().to_string();
        }
    }
    table
}

pub(crate) fn qualify_key(text: &str, line: Option<usize>, key: &str) -> String {
    match line.map(|l| table_of_line(text, l)) {
        Some(table) if !table.is_empty() && !key.contains('.') => format!("{table}.{key}"),
        _ => key.to_string(),
    }
}

/// The 1-based line on which `key` is set: a root key such as `cut_feed`, or a dotted key such
/// as `travel.x_min` for a key inside a table.
pub(crate) fn find_key_line(text: &str, key: &str) -> Option<usize> {
    let (wanted_table, key) = key.rsplit_once('.').unwrap_or(("", key));
    let mut table = String::new();
    for (i, l) in text.lines().enumerate() {
        let t = l.trim();
        if t.starts_with('[') {
            table = t.trim_matches(|c| c == '[' || c == ']').trim().to_string();
            continue;
        }
        if table != wanted_table {
            continue;
        }
        if let Some((k, _)) = t.split_once('=')
            && k.trim().trim_matches('"') == key
        {
            return Some(i + 1);
        }
    }
    None
}

/// The start of every line of a text, to find the line of many byte offsets quickly.
#[derive(Debug, Clone)]
pub(crate) struct LineIndex {
    starts: Vec<usize>,
}

impl LineIndex {
    pub(crate) fn new(text: &str) -> Self {
        let mut starts = vec![0];
        starts.extend(text.match_indices('\n').map(|(i, _)| i + 1));
        LineIndex { starts }
    }

    /// The 1-based line holding byte `offset`.
    pub(crate) fn line(&self, offset: usize) -> usize {
        self.starts.partition_point(|&s| s <= offset)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn offsets_map_to_the_same_line_both_ways() {
        let text = "a = 1\n\n[t]\nb = 2\n";
        let index = LineIndex::new(text);
        for offset in 0..text.len() {
            assert_eq!(
                index.line(offset),
                line_of_offset(text, offset),
                "offset {offset}"
            );
        }
        assert_eq!(index.line(text.find('b').unwrap()), 4);
    }

    #[test]
    fn key_lines_are_found_in_the_right_table() {
        let text = "name = \"a\"\n[travel]\nx_min = 1\n";
        assert_eq!(find_key_line(text, "travel.x_min"), Some(3));
        assert_eq!(find_key_line(text, "x_min"), None);
        assert_eq!(find_key_line(text, "name"), Some(1));
        assert_eq!(find_key_line(text, "cut_feed"), None);
        assert_eq!(qualify_key(text, Some(3), "x_min"), "travel.x_min");
    }
}
