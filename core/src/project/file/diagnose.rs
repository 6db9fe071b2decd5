//! Parse errors a user can act on: the item the error is in (the node, run
//! or level, found by its `id:`), the field in the user's words, and for a
//! misspelt name the nearest name the format knows.
//!
//! The parser reports a line and a column; [`item_at`] scans the text up to
//! there (strings and comments skipped, brackets counted) to find which
//! entry of `levels`, `nodes` or `runs` — or `settings` — holds it. The
//! scan never fails: when it cannot tell, the message simply names no item.

/// The message of a parse error: "node N6: unknown field `supply_C` in the
/// emitter — did you mean `room_c`?".
pub(super) fn parse_message(text: &str, e: &ron::error::SpannedError) -> String {
    let offset = byte_offset(text, e.span.start.line, e.span.start.col);
    let item = item_at(text, offset);
    let what = describe(&e.code);
    match item {
        Some(item) => format!("{item}: {what}"),
        None => what,
    }
}

/// The error in the user's words (no Rust type names).
fn describe(code: &ron::Error) -> String {
    match code {
        ron::Error::NoSuchStructField { expected, found, outer } => {
            // "settings: unknown field …" needs no "in the settings".
            let place = outer
                .as_deref()
                .filter(|&o| o != "DesignSettings")
                .map_or_else(String::new, |o| format!(" in {}", part_name(o)));
            format!("unknown field `{}`{place} — {}", printable(found), suggestion(found, expected, "field"))
        }
        ron::Error::MissingStructField { field, outer } => {
            let place = outer.as_deref().map_or_else(String::new, |o| format!(" of {}", part_name(o)));
            format!(
                "the field `{field}`{place} is missing — add it (docs/file-format.md lists every field and its \
                 unit)"
            )
        }
        ron::Error::DuplicateStructField { field, outer } => {
            let place = outer.as_deref().map_or_else(String::new, |o| format!(" in {}", part_name(o)));
            format!("the field `{field}` is given twice{place} — keep one")
        }
        ron::Error::NoSuchEnumVariant { expected, found, outer } => {
            let place = outer.as_deref().map_or_else(String::new, |o| format!(" for {}", part_name(o)));
            format!("`{}` is not a known kind{place} — {}", printable(found), suggestion(found, expected, "kind"))
        }
        other => printable(&other.to_string()),
    }
}

/// "did you mean `length_override_m`?" when a known name is close,
/// else the list of known names.
fn suggestion(found: &str, expected: &[&str], word: &str) -> String {
    let list = || expected.iter().map(|n| format!("`{n}`")).collect::<Vec<_>>().join(", ");
    match nearest(found, expected) {
        Some(best) => format!("did you mean `{best}`?"),
        None if expected.is_empty() => format!("no {word} is expected here"),
        None => format!("the {word}s here are {}", list()),
    }
}

/// The known name nearest `found` (edit distance, ignoring case), when it
/// is close enough to be a misspelling: at most 2 edits, or a third of the
/// name for longer names.
fn nearest<'a>(found: &str, expected: &[&'a str]) -> Option<&'a str> {
    let f = found.to_lowercase();
    let limit = (f.chars().count() / 3).max(2);
    expected
        .iter()
        .map(|&n| (edit_distance(&f, &n.to_lowercase()), n))
        .filter(|&(d, _)| d <= limit)
        .min_by_key(|&(d, _)| d)
        .map(|(_, n)| n)
}

/// Levenshtein distance between two strings, in characters. Names longer
/// than a few hundred characters are not names: their distance is taken as
/// their length difference plus a large constant (keeps a hostile file
/// from costing quadratic time).
fn edit_distance(a: &str, b: &str) -> usize {
    const MAX_CHARS: usize = 256;
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    if a.len() > MAX_CHARS || b.len() > MAX_CHARS {
        return a.len().abs_diff(b.len()) + MAX_CHARS;
    }
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for (i, ca) in a.iter().enumerate() {
        cur[0] = i + 1;
        for (j, cb) in b.iter().enumerate() {
            let sub = prev[j] + usize::from(ca != cb);
            cur[j + 1] = sub.min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

/// The part of the file a struct stands for, as the format documentation
/// names it.
fn part_name(rust_name: &str) -> String {
    match rust_name {
        "ProjectFile" => "the project file",
        "DesignSettings" => "the settings",
        "PerClass" => "the per-class values (main, branch, connection)",
        "Level" => "the level",
        "Node" => "the node",
        "PlanPoint" => "the point (x_m, y_m)",
        "NodeKind" => "the node's kind",
        "HeatSource" => "the heat source",
        "PumpSpec" => "the pump",
        "PumpControl" => "the pump control",
        "PumpCurvePoints" => "the pump curve",
        "Header" => "the header",
        "Emitter" => "the emitter",
        "EmitterValves" => "the emitter's valves",
        "EmitterModel" => "the emitter model",
        "RadiatorSpec" => "the radiator",
        "RadiatorSizing" => "the radiator sizing",
        "Existing" => "the existing radiator's size",
        "Chosen" => "the chosen radiator's size",
        "ConstantDp" | "ProportionalDp" => "the pump set-point",
        "FloorLoopSpec" => "the floor loop",
        "FloorZone" => "the floor zone",
        "TerminalSpec" => "the terminal",
        "Run" => "the run",
        "RunProps" => "the run's properties",
        "PipeClass" => "the pipe class",
        "ReturnLayout" => "the return layout",
        "Mode" => "the mode",
        other => return format!("`{}`", printable(other)),
    }
    .to_owned()
}

/// `text` with control characters written as escapes, so a message never
/// carries one to a terminal.
fn printable(text: &str) -> String {
    if text.chars().any(char::is_control) { text.escape_debug().to_string() } else { text.to_owned() }
}

/// Byte offset of a 1-based line and (character) column, clamped to the
/// text.
fn byte_offset(text: &str, line: usize, col: usize) -> usize {
    let mut start = 0;
    if line > 1 {
        match text.match_indices('\n').nth(line - 2) {
            Some((i, _)) => start = i + 1,
            None => return text.len(),
        }
    }
    let rest = &text[start..];
    let line_len = rest.find('\n').unwrap_or(rest.len());
    start + rest[..line_len].char_indices().nth(col.saturating_sub(1)).map_or(line_len, |(i, _)| i)
}

/// An open bracket on the scan's stack.
struct Open {
    /// Byte offset just after the bracket.
    inner: usize,
    /// The field name written before it (`nodes: [` → "nodes"), if any.
    key: Option<String>,
}

/// The item holding byte `offset` of a project text: "settings", "level
/// L2", "node N6", "run R3" (or "the 4th node" when the entry has no
/// readable id); `None` at the top level or when the text is too broken.
pub(super) fn item_at(text: &str, offset: usize) -> Option<String> {
    let stack = open_brackets(text, offset);
    // stack[0]: the project's own parentheses; stack[1]: a top-level
    // field's value; stack[2]: an entry of a list.
    let top = stack.get(1)?;
    match top.key.as_deref()? {
        "settings" => Some("settings".to_owned()),
        list @ ("levels" | "nodes" | "runs") => {
            let entry = stack.get(2)?;
            let (word, prefix) = match list {
                "levels" => ("level", "L"),
                "nodes" => ("node", "N"),
                _ => ("run", "R"),
            };
            match id_in(text, entry.inner) {
                Some(id) => Some(format!("{word} {prefix}{id}")),
                None => {
                    let n = entries_before(text, top.inner, entry.inner) + 1;
                    Some(format!("the {} {word} of the list (it has no readable id)", ordinal(n)))
                }
            }
        }
        _ => None,
    }
}

/// The brackets open at byte `offset`, outermost first.
fn open_brackets(text: &str, offset: usize) -> Vec<Open> {
    let mut stack: Vec<Open> = Vec::new();
    let mut key: Option<String> = None;
    let mut word = String::new();
    let mut scan = Scanner::new(text);
    while let Some((i, c)) = scan.next_code() {
        if i >= offset {
            break;
        }
        match c {
            '(' | '[' | '{' => {
                stack.push(Open { inner: i + 1, key: key.take() });
                word.clear();
            }
            ')' | ']' | '}' => {
                stack.pop();
                key = None;
                word.clear();
            }
            ':' => {
                if !word.is_empty() {
                    key = Some(std::mem::take(&mut word));
                }
            }
            ',' => {
                key = None;
                word.clear();
            }
            c if c.is_alphanumeric() || c == '_' => {
                // A new word starts after anything else.
                if scan.word_break {
                    word.clear();
                }
                word.push(c);
            }
            c if c.is_whitespace() => {}
            _ => word.clear(),
        }
    }
    stack
}

/// The integer after `id:` directly inside the entry that starts at byte
/// `inner` (not in a nested bracket).
fn id_in(text: &str, inner: usize) -> Option<u64> {
    let mut depth = 0usize;
    let mut word = String::new();
    let mut scan = Scanner::new(text.get(inner..)?);
    while let Some((i, c)) = scan.next_code() {
        match c {
            '(' | '[' | '{' => depth += 1,
            ')' | ']' | '}' => {
                if depth == 0 {
                    return None;
                }
                depth -= 1;
            }
            ':' if depth == 0 && word == "id" => {
                let rest = text.get(inner + i + 1..)?.trim_start();
                let digits: String = rest.chars().take_while(char::is_ascii_digit).take(20).collect();
                return digits.parse().ok();
            }
            c if c.is_alphanumeric() || c == '_' => {
                if scan.word_break {
                    word.clear();
                }
                word.push(c);
            }
            c if c.is_whitespace() => {}
            _ => word.clear(),
        }
    }
    None
}

/// How many entries of the list whose inside starts at `list_inner` open
/// before `entry_inner`.
fn entries_before(text: &str, list_inner: usize, entry_inner: usize) -> usize {
    let Some(slice) = text.get(list_inner..entry_inner) else { return 0 };
    let mut depth = 0usize;
    let mut count = 0;
    let mut scan = Scanner::new(slice);
    while let Some((i, c)) = scan.next_code() {
        match c {
            '(' | '[' | '{' => {
                if depth == 0 && list_inner + i + 1 < entry_inner {
                    count += 1;
                }
                depth += 1;
            }
            ')' | ']' | '}' => depth = depth.saturating_sub(1),
            _ => {}
        }
    }
    count
}

fn ordinal(n: usize) -> String {
    let suffix = match (n % 10, n % 100) {
        (_, 11..=13) => "th",
        (1, _) => "st",
        (2, _) => "nd",
        (3, _) => "rd",
        _ => "th",
    };
    format!("{n}{suffix}")
}

/// Walks RON text, yielding the characters outside strings and comments
/// (a string yields one `"` so words around it stay apart).
struct Scanner<'a> {
    chars: std::iter::Peekable<std::str::CharIndices<'a>>,
    /// True when the character just yielded follows a skipped string,
    /// comment or a non-word character: it starts a new word.
    word_break: bool,
    last_was_word: bool,
}

impl<'a> Scanner<'a> {
    fn new(text: &'a str) -> Self {
        Self { chars: text.char_indices().peekable(), word_break: true, last_was_word: false }
    }

    fn next_code(&mut self) -> Option<(usize, char)> {
        loop {
            let (i, c) = self.chars.next()?;
            match c {
                '"' => {
                    self.skip_string();
                    self.last_was_word = false;
                    return Some((i, '"'));
                }
                '/' if self.chars.peek().is_some_and(|&(_, n)| n == '/') => {
                    for (_, n) in self.chars.by_ref() {
                        if n == '\n' {
                            break;
                        }
                    }
                    self.last_was_word = false;
                }
                '/' if self.chars.peek().is_some_and(|&(_, n)| n == '*') => {
                    self.chars.next();
                    self.skip_block_comment();
                    self.last_was_word = false;
                }
                _ => {
                    let is_word = c.is_alphanumeric() || c == '_';
                    self.word_break = !self.last_was_word;
                    self.last_was_word = is_word;
                    return Some((i, c));
                }
            }
        }
    }

    fn skip_string(&mut self) {
        while let Some((_, c)) = self.chars.next() {
            match c {
                '\\' => {
                    self.chars.next();
                }
                '"' => return,
                _ => {}
            }
        }
    }

    /// Block comments nest in RON.
    fn skip_block_comment(&mut self) {
        let mut depth = 1usize;
        while let Some((_, c)) = self.chars.next() {
            match c {
                '*' if self.chars.peek().is_some_and(|&(_, n)| n == '/') => {
                    self.chars.next();
                    depth -= 1;
                    if depth == 0 {
                        return;
                    }
                }
                '/' if self.chars.peek().is_some_and(|&(_, n)| n == '*') => {
                    self.chars.next();
                    depth += 1;
                }
                _ => {}
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn distances_and_suggestions() {
        assert_eq!(edit_distance("length_overide_m", "length_override_m"), 1);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(nearest("supply_C", &["supply_c", "return_c", "room_c"]), Some("supply_c"));
        assert_eq!(nearest("colour", &["supply_c", "return_c"]), None);
        assert!(suggestion("colour", &["a_b"], "field").contains("`a_b`"));
    }

    #[test]
    fn the_item_is_found_by_its_id_wherever_the_id_is_written() {
        let text = "(\n  name: \"x (a) [b]\", // nodes: [\n  settings: (supply_c: 1.0),\n  nodes: [\n    (id: 4, \
                    kind: Junction),\n    (level: 0, pos: (x_m: 1.0, y_m: 2.0), id: 7, bad: 1),\n    (level: \
                    0),\n  ],\n  runs: [ /* (id: 9) */ (id: 12, props: (x: 1)) ],\n)";
        let at = |needle: &str| item_at(text, text.find(needle).unwrap());
        assert_eq!(at("supply_c"), Some("settings".to_owned()));
        assert_eq!(at("kind: Junction"), Some("node N4".to_owned()));
        assert_eq!(at("bad"), Some("node N7".to_owned()));
        assert_eq!(at("y_m: 2.0"), Some("node N7".to_owned()));
        assert_eq!(at("level: 0)"), Some("the 3rd node of the list (it has no readable id)".to_owned()));
        assert_eq!(at("x: 1"), Some("run R12".to_owned()));
        assert_eq!(at("name"), None);
        let spaced = "(levels: [ ( name: \"x\", id : 3 ) ])";
        assert_eq!(item_at(spaced, spaced.find("name").unwrap()), Some("level L3".to_owned()));
    }

    #[test]
    fn offsets_count_characters_and_stay_inside_the_text() {
        let t = "ä\nöx\n";
        assert_eq!(byte_offset(t, 2, 2), t.find('x').unwrap());
        assert_eq!(byte_offset(t, 9, 1), t.len());
        assert_eq!(byte_offset(t, 1, 99), 2);
        assert_eq!(item_at("((((", 4), None);
        assert_eq!(item_at("", 0), None);
    }
}
