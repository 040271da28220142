//! Workbooks (.xlsx, .xlsm, .xls, .ods) read as the CSV they would export: one text line per
//! sheet row, so that line N of the text is row N of the sheet, and every refusal is then given
//! the sheet and the cell (`D17`) as well as the column and value.

use crate::error::InputError;
use calamine::{Data, Reader};

/// Whether `name` names a workbook (by its extension, case-insensitively).
pub fn is_workbook(name: &str) -> bool {
    let lower = name.to_ascii_lowercase();
    [".xlsx", ".xlsm", ".xls", ".ods"].iter().any(|e| lower.ends_with(e))
}

/// One sheet of a workbook as CSV text.
pub struct Sheet {
    /// The sheet's name.
    pub name: String,
    /// Its cells as CSV (numbers in their shortest round-trip form, text as written, a date as
    /// `date:` and its serial number, a formula error as written, such as `#DIV/0!`).
    pub csv: Vec<u8>,
    /// The 0-based column of the sheet at which the text's first field stands.
    pub first_column: usize,
}

/// Reads sheet `wanted` (the first when `None`) of the workbook `bytes` named `file`. A
/// damaged workbook is refused, even where the reader would panic on it.
pub fn sheet_as_csv(file: &str, bytes: Vec<u8>, wanted: Option<&str>) -> Result<Sheet, InputError> {
    let read = std::panic::catch_unwind(|| read_sheet(file, bytes, wanted));
    read.unwrap_or_else(|_| Err(InputError::file(file, "the workbook is damaged and could not be read")))
}

fn read_sheet(file: &str, bytes: Vec<u8>, wanted: Option<&str>) -> Result<Sheet, InputError> {
    let refuse = |message: String| InputError::file(file, message);
    let mut book = calamine::open_workbook_auto_from_rs(std::io::Cursor::new(bytes))
        .map_err(|e| refuse(format!("the workbook could not be read: {e}")))?;
    let names = book.sheet_names();
    let name = match wanted {
        Some(w) => names
            .iter()
            .find(|n| n.as_str() == w)
            .cloned()
            .ok_or_else(|| refuse(format!("there is no sheet '{w}'; the workbook has {}", quoted_list(&names))))?,
        None => names.first().cloned().ok_or_else(|| refuse("the workbook has no sheet".into()))?,
    };
    let range = book.worksheet_range(&name).map_err(|e| refuse(format!("sheet '{name}' could not be read: {e}")))?;
    let (first_row, first_column) = range.start().map_or((0, 0), |(r, c)| (r as usize, c as usize));
    // Columns to the right of the last one holding anything are formatting, not data.
    let width = range.rows().map(|row| row.iter().rposition(|c| !is_blank(c)).map_or(0, |i| i + 1)).max().unwrap_or(0);
    let mut csv = Vec::new();
    // Rows above the range are empty: blank lines keep line N on row N.
    csv.extend(std::iter::repeat_n(b'\n', first_row));
    for row in range.rows() {
        // A row whose first cell starts with `#` is a comment, as a `#` line is in a CSV file.
        if let Some(Data::String(text)) = row.first().filter(|_| first_column == 0) {
            if text.starts_with('#') {
                csv.extend_from_slice(text.replace(['\n', '\r'], " ").as_bytes());
                csv.push(b'\n');
                continue;
            }
        }
        for (i, cell) in row.iter().take(width).enumerate() {
            if i > 0 {
                csv.push(b',');
            }
            field(&mut csv, cell);
        }
        csv.push(b'\n');
    }
    Ok(Sheet { name, csv, first_column })
}

fn is_blank(cell: &Data) -> bool {
    match cell {
        Data::Empty => true,
        Data::String(s) => s.trim().is_empty(),
        _ => false,
    }
}

/// A cell as one CSV field, quoted where it holds a comma, a quote or a line break. A formula's
/// error (`#DIV/0!`) is quoted too, so that it never reads as a comment; a text cell starting
/// with `#` in the first column is a comment row, as in a CSV file.
fn field(out: &mut Vec<u8>, cell: &Data) {
    let error = matches!(cell, Data::Error(_));
    let text = match cell {
        Data::Empty => return,
        Data::Int(i) => i.to_string(),
        Data::Float(f) => zmij::Buffer::new().format(*f).to_string(),
        Data::String(s) => s.clone(),
        Data::Bool(b) => if *b { "TRUE" } else { "FALSE" }.to_string(),
        Data::DateTime(d) => format!("date:{}", d.as_f64()),
        Data::DateTimeIso(s) | Data::DurationIso(s) => format!("date:{s}"),
        Data::Error(e) => e.to_string(),
    };
    if error || text.bytes().any(|b| matches!(b, b',' | b'"' | b'\n' | b'\r')) {
        out.push(b'"');
        out.extend_from_slice(text.replace('"', "\"\"").as_bytes());
        out.push(b'"');
    } else {
        out.extend_from_slice(text.as_bytes());
    }
}

fn quoted_list(names: &[String]) -> String {
    names.iter().map(|n| format!("'{n}'")).collect::<Vec<_>>().join(", ")
}

/// The spreadsheet name of a 0-based column: A, …, Z, AA, …
pub fn column_letters(mut column: usize) -> String {
    let mut letters = Vec::new();
    loop {
        letters.push(b'A' + (column % 26) as u8);
        if column < 26 {
            break;
        }
        column = column / 26 - 1;
    }
    letters.reverse();
    String::from_utf8(letters).expect("ASCII letters")
}

/// A refusal of the sheet's text, told in the workbook's terms: the file with its sheet, and the
/// cell where a line and a header column locate one.
pub fn in_sheet(mut error: InputError, file: &str, sheet: &Sheet, header: &[String]) -> InputError {
    let cell = match (error.line, &error.column) {
        (Some(line), Some(column)) => header
            .iter()
            .position(|h| h == column || column.starts_with(&format!("{h} ")))
            .or_else(|| column.strip_prefix("field ")?.split(' ').next()?.parse::<usize>().ok()?.checked_sub(1))
            .map(|i| format!(", cell {}{line}", column_letters(sheet.first_column + i))),
        _ => None,
    };
    error.file = format!("{file}, sheet '{}'{}", sheet.name, cell.unwrap_or_default()).into();
    error
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn column_letters_run_as_in_a_spreadsheet() {
        assert_eq!(column_letters(0), "A");
        assert_eq!(column_letters(25), "Z");
        assert_eq!(column_letters(26), "AA");
        assert_eq!(column_letters(27), "AB");
        assert_eq!(column_letters(701), "ZZ");
        assert_eq!(column_letters(702), "AAA");
    }
}
