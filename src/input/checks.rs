//! Text checks made before a file is parsed: line ends, UTF-8, characters that would act
//! instead of being shown, overlong lines, ragged rows.

use super::*;

/// Refuses text whose lines end with a carriage return alone (old Mac exports), which would
/// otherwise read as one long header line with nothing under it.
pub(super) fn check_line_ends(name: &str, bytes: &[u8]) -> Result<(), InputError> {
    if memchr::memchr(b'\n', bytes).is_none() && memchr::memchr(b'\r', bytes).is_some() {
        return Err(InputError::at(
            name,
            1,
            None,
            None,
            "the lines end with a carriage return alone (an old Mac export): save the file with LF or CRLF line ends",
        ));
    }
    Ok(())
}

pub(super) fn check_utf8(name: &str, bytes: &[u8]) -> Result<(), InputError> {
    check_utf8_from(name, bytes, 1)
}

/// [`check_utf8`] for bytes that start on line `first_line` of the file; the text must also
/// hold no character that acts instead of being shown ([`first_hidden_character`]).
pub(super) fn check_utf8_from(name: &str, bytes: &[u8], first_line: usize) -> Result<(), InputError> {
    // UTF-16 without a byte-order mark is valid UTF-8 when its text is ASCII: every other byte
    // is zero. Said as such, not as a control character or a decimal comma.
    let start = &bytes[..bytes.len().min(256)];
    if start.len() >= 4 && start.iter().filter(|b| **b == 0).count() * 3 >= start.len() {
        return Err(InputError::at(
            name,
            first_line,
            None,
            None,
            "the text looks like UTF-16 (every other byte is zero), as some spreadsheets save it; save it as UTF-8 CSV",
        ));
    }
    let e = match std::str::from_utf8(bytes) {
        Ok(text) => return check_hidden_from(name, text, first_line),
        Err(e) => e,
    };
    let (line, field) = line_and_field(&bytes[..e.valid_up_to()], first_line);
    Err(InputError::at(
        name,
        line,
        Some(&format!("field {field}")),
        None,
        "the text is not UTF-8 (perhaps Latin-1 or UTF-16 from a spreadsheet); save it as UTF-8 CSV",
    ))
}

/// The line and 1-based comma-separated field at the end of `before` (text from the start of
/// line `first_line`).
pub(super) fn line_and_field(before: &[u8], first_line: usize) -> (usize, usize) {
    let line = first_line + before.iter().filter(|b| **b == b'\n').count();
    let line_start = before.iter().rposition(|b| *b == b'\n').map_or(0, |p| p + 1);
    (line, 1 + before[line_start..].iter().filter(|b| **b == b',').count())
}

/// The first character of `text` that would act on a terminal, a spreadsheet or an XML reader
/// instead of being shown (a series name that clears the screen or breaks every SVG): C0 and
/// C1 controls other than tab and line ends, DEL, the bidirectional overrides and isolates,
/// and the noncharacters U+FFFE and U+FFFF. Returns its byte offset.
pub fn first_hidden_character(text: &str) -> Option<(usize, char)> {
    let bytes = text.as_bytes();
    let mut i = 0;
    while i < bytes.len() {
        let b = bytes[i];
        if (0x20..0x7f).contains(&b) || matches!(b, b'\t' | b'\n' | b'\r') {
            i += 1;
            continue;
        }
        let ch = text[i..].chars().next()?;
        if ch.is_control() || matches!(ch, '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}' | '\u{FFFE}' | '\u{FFFF}')
        {
            return Some((i, ch));
        }
        i += ch.len_utf8();
    }
    None
}

/// Refuses text holding a [`first_hidden_character`], naming its line, field and code point.
pub(super) fn check_hidden_from(name: &str, text: &str, first_line: usize) -> Result<(), InputError> {
    let Some((at, ch)) = first_hidden_character(text) else { return Ok(()) };
    let (line, field) = line_and_field(&text.as_bytes()[..at], first_line);
    Err(InputError::at(
        name,
        line,
        Some(&format!("field {field}")),
        None,
        format!(
            "the text holds an invisible control character (U+{:04X}), which could act on a terminal or a spreadsheet; remove it",
            ch as u32
        ),
    ))
}

/// The refusal of a line longer than [`scan::MAX_RECORD_BYTES`], at `field` (its header name
/// when known).
pub(super) fn too_long(name: &str, line: usize, column: Option<&str>, field: usize) -> InputError {
    let column = column.map_or_else(|| format!("field {field}"), str::to_string);
    InputError::at(
        name,
        line,
        Some(&column),
        None,
        format!(
            "the line is longer than {} MB, far more than any reading needs: a damaged file, or not a data file",
            scan::MAX_RECORD_BYTES >> 20
        ),
    )
}

pub(super) fn check_structure(name: &str, layout: &Layout) -> Result<(), InputError> {
    let width = layout.header.len();
    for record in &layout.records {
        if let Some(field) = record.too_long {
            return Err(too_long(name, record.line, layout.header.get(field - 1).map(String::as_str), field));
        }
        // A quoting problem in one field, named by its header (or position).
        let in_field = |field: usize, message: &str| {
            let column = layout.header.get(field - 1).cloned().unwrap_or_else(|| format!("field {field}"));
            InputError::at(name, record.line, Some(&column), None, message)
        };
        if let Some(field) = record.unclosed_quote {
            return Err(in_field(
                field,
                "a double quote opens here and is never closed: remove it, or close it after the value",
            ));
        }
        if let Some(field) = record.stray_quote {
            return Err(in_field(
                field,
                "text follows a closing quote (as in \"4.00\"x): quote the whole value, or remove the quotes",
            ));
        }
        if record.blank || record.n_fields == width {
            continue;
        }
        let message = format!(
            "the row has {} fields but the header has {width}; a decimal comma or an unquoted comma inside a value splits a field",
            record.n_fields
        );
        let column = if record.n_fields < width {
            format!("{} (missing)", layout.header[record.n_fields])
        } else {
            format!("field {} (beyond the header)", width + 1)
        };
        return Err(InputError::at(name, record.line, Some(&column), None, message));
    }
    Ok(())
}
