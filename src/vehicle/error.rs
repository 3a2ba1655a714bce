//! Errors of the vehicle stage: a rover description that does not parse or holds values
//! outside their valid range. Every problem names the key, what was expected and the fix,
//! with the line and column in the TOML text where the parser gives a span.

use std::fmt;

/// Where in the TOML text a problem sits (1-based line and column, columns in characters).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct TextPos {
    /// Line, counted from 1.
    pub line: usize,
    /// Column, counted from 1, in characters.
    pub column: usize,
}

impl TextPos {
    /// The position of byte `offset` in `text` (clamped to the end of the text).
    pub fn of_offset(text: &str, offset: usize) -> TextPos {
        let mut end = offset.min(text.len());
        while !text.is_char_boundary(end) {
            end -= 1;
        }
        let before = &text[..end];
        let line = before.matches('\n').count() + 1;
        let line_start = before.rfind('\n').map_or(0, |i| i + 1);
        let column = before[line_start..].chars().count() + 1;
        TextPos { line, column }
    }
}

/// One problem with one key of a rover description.
#[derive(Debug, Clone, PartialEq)]
pub struct Problem {
    /// The key as written in the file (`mass_kg`, `efficiency_table.efficiency`).
    pub key: String,
    /// Where the value sits, when known.
    pub pos: Option<TextPos>,
    /// What is wrong and what was expected.
    pub detail: String,
    /// What the user can do.
    pub fix: String,
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if let Some(p) = self.pos {
            write!(f, "line {}, column {}: ", p.line, p.column)?;
        }
        write!(
            f,
            "rover key `{}`: {}. Fix: {}",
            self.key, self.detail, self.fix
        )
    }
}

/// Everything that can go wrong while reading or checking a rover description.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum VehicleError {
    /// The text is not valid TOML, or a value has the wrong type.
    #[error("{}rover description is not readable: {message}. Fix: {fix}", pos_prefix(.pos))]
    Parse {
        /// Where the parser stopped, when it says.
        pos: Option<TextPos>,
        /// The parser's message.
        message: String,
        /// What the user can do.
        fix: String,
    },
    /// One or more keys hold values outside their valid range or that contradict
    /// each other; every problem found is listed.
    #[error("{}", list(.0))]
    Invalid(Vec<Problem>),
}

fn pos_prefix(pos: &Option<TextPos>) -> String {
    pos.map_or(String::new(), |p| {
        format!("line {}, column {}: ", p.line, p.column)
    })
}

fn list(problems: &[Problem]) -> String {
    let lines: Vec<String> = problems.iter().map(Problem::to_string).collect();
    lines.join("\n")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn offsets_map_to_lines_and_columns() {
        let text = "a = 1\nbé = 2\n";
        assert_eq!(TextPos::of_offset(text, 0), TextPos { line: 1, column: 1 });
        let at_2 = text.find('2').unwrap();
        assert_eq!(
            TextPos::of_offset(text, at_2),
            TextPos { line: 2, column: 6 }
        );
        assert_eq!(TextPos::of_offset(text, 999).line, 3);
    }
}
