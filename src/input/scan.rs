//! A quote-aware pass over the raw bytes that finds the header and the line number of every
//! record, so that messages can name lines (polars itself reports only byte offsets).

/// One record (data row) of the file, as the CSV reader will see it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RecordLine {
    /// 1-based line on which the record starts.
    pub line: usize,
    /// Number of comma-separated fields (quotes respected).
    pub n_fields: usize,
    /// The record holds nothing but white space.
    pub blank: bool,
    /// The 1-based field in which text follows a closing quote (`"4.00"x`), if any: malformed
    /// quoting, which the CSV reader would refuse with a byte offset only.
    pub stray_quote: Option<usize>,
    /// The 1-based field at which the record passes `MAX_RECORD_BYTES`, if it does.
    pub too_long: Option<usize>,
    /// The 1-based field whose opening quote is never closed (the record runs to the end of
    /// the file), if any.
    pub unclosed_quote: Option<usize>,
}

/// The longest data line read, in bytes: a reading takes a few dozen; a longer line is a
/// damaged or wrong file, refused before the CSV reader (whose time grows faster than the
/// line) sees it.
pub const MAX_RECORD_BYTES: usize = 1 << 20;

/// The 1-based field holding byte [`MAX_RECORD_BYTES`] of the record `bytes[pos..end]`, when the
/// record is longer than that.
pub fn overlong(bytes: &[u8], pos: usize, end: usize) -> Option<usize> {
    (end - pos > MAX_RECORD_BYTES).then(|| 1 + memchr::memchr_iter(b',', &bytes[pos..pos + MAX_RECORD_BYTES]).count())
}

/// The structure of a CSV file: its header fields and the records after it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Layout {
    /// 1-based line of the header.
    pub header_line: usize,
    /// Header fields, unquoted and trimmed.
    pub header: Vec<String>,
    /// Every record after the header, blank ones included (the reader yields them as nulls).
    pub records: Vec<RecordLine>,
}

/// The UTF-8 byte-order mark, which spreadsheet exports often put first.
pub const BOM: &[u8] = b"\xef\xbb\xbf";

/// Splits `bytes` into records: `#` at the start of a line makes a comment, the first other
/// line is the header. Returns `None` when there is no header at all.
pub fn scan(bytes: &[u8]) -> Option<Layout> {
    let header = scan_header(bytes)?;
    let block = scan_records(&bytes[header.data_start..], header.data_line, true);
    Some(Layout { header_line: header.line, header: header.fields, records: block.records })
}

/// The header of a CSV and where its data begin.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Header {
    /// 1-based line of the header.
    pub line: usize,
    /// Header fields, unquoted and trimmed.
    pub fields: Vec<String>,
    /// Byte offset just past the header line (a byte-order mark included).
    pub data_start: usize,
    /// 1-based line at `data_start`.
    pub data_line: usize,
}

/// Finds the header: the first line that is neither a comment nor blank.
pub fn scan_header(bytes: &[u8]) -> Option<Header> {
    let bom = if bytes.starts_with(BOM) { BOM.len() } else { 0 };
    let body = &bytes[bom..];
    let mut line = 1usize;
    let mut pos = 0usize;
    while pos < body.len() {
        let start_line = line;
        let (end, next, newlines) = if body[pos] == b'#' {
            // A comment ends at its line end whatever it holds.
            let end = memchr::memchr(b'\n', &body[pos..]).map_or(body.len(), |e| pos + e);
            (end, (end + 1).min(body.len()), usize::from(end < body.len()))
        } else {
            record_end(body, pos)
        };
        let text = &body[pos..end];
        let text = text.strip_suffix(b"\r").unwrap_or(text);
        pos = next;
        line += newlines;
        if text.first() == Some(&b'#') || text.iter().all(u8::is_ascii_whitespace) {
            continue;
        }
        return Some(Header { line: start_line, fields: split_fields(text), data_start: bom + pos, data_line: line });
    }
    None
}

/// The records of one block of data lines.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Records {
    /// Every record, blank ones included.
    pub records: Vec<RecordLine>,
    /// Bytes of the block these records span: a record cut off by the end of a block that is
    /// not the end of the file is left for the next block.
    pub consumed: usize,
    /// 1-based line just after them.
    pub next_line: usize,
}

/// The records of `bytes` (data lines, after the header), the first starting on `first_line`;
/// `at_end` says whether the file ends with these bytes.
pub fn scan_records(bytes: &[u8], first_line: usize, at_end: bool) -> Records {
    // One record per line at most: reserving that avoids doubling a campaign's vector.
    let mut records = Vec::with_capacity(memchr::memchr_iter(b'\n', bytes).count() + 1);
    let mut line = first_line;
    let mut pos = 0usize;
    while pos < bytes.len() {
        // Records that end before the next quote need no quote tracking: one vectorised search
        // for commas and line ends walks them (this pass runs over every byte of a campaign).
        let quote = memchr::memchr(b'"', &bytes[pos..]).map_or(bytes.len(), |q| pos + q);
        let (base, mut n_fields) = (pos, 1);
        for hit in memchr::memchr2_iter(b',', b'\n', &bytes[base..quote]) {
            let i = base + hit;
            if bytes[i] == b',' {
                n_fields += 1;
                continue;
            }
            // Data rows are only counted, not copied.
            if bytes[pos] != b'#' {
                records.push(RecordLine {
                    line,
                    n_fields,
                    blank: is_blank(&bytes[pos..i]),
                    stray_quote: None,
                    too_long: overlong(bytes, pos, i),
                    unclosed_quote: None,
                });
            }
            (line, pos, n_fields) = (line + 1, i + 1, 1);
        }
        if pos == bytes.len() {
            break;
        }
        // The record at `pos` holds a quote, or runs to the end of the bytes. A comment ends at
        // its line end whatever it holds: a quote in it opens nothing.
        let (end, newlines, n_fields, blank, stray_quote, unclosed_quote) = if bytes[pos] == b'#' {
            (memchr::memchr(b'\n', &bytes[pos..]).map_or(bytes.len(), |e| pos + e), 0, 1, false, None, None)
        } else {
            record_at(bytes, pos)
        };
        if !at_end && end == bytes.len() {
            break;
        }
        let next = if end < bytes.len() { end + 1 } else { end };
        let start_line = line;
        line += newlines + usize::from(end < bytes.len());
        let comment = bytes[pos] == b'#';
        let too_long = overlong(bytes, pos, end);
        pos = next;
        if !comment {
            records.push(RecordLine { line: start_line, n_fields, blank, stray_quote, too_long, unclosed_quote });
        }
    }
    Records { records, consumed: pos, next_line: line }
}

/// `bytes` with every double quote inside a comment line (a `#` at the start of a line outside
/// quotes) replaced by a single quote, for the CSV reader, which would otherwise open a quoted
/// field at it and read on to the next quote, swallowing the rows between. Borrowed unchanged
/// when no comment holds a quote (the usual case: a file without quotes is not walked).
pub fn comment_quotes_neutralised(bytes: &[u8]) -> std::borrow::Cow<'_, [u8]> {
    if memchr::memchr(b'"', bytes).is_none() {
        return std::borrow::Cow::Borrowed(bytes);
    }
    let mut out: Option<Vec<u8>> = None;
    let mut pos = if bytes.starts_with(BOM) { BOM.len() } else { 0 };
    while pos < bytes.len() {
        if bytes[pos] == b'#' {
            let end = memchr::memchr(b'\n', &bytes[pos..]).map_or(bytes.len(), |e| pos + e);
            for q in memchr::memchr_iter(b'"', &bytes[pos..end]) {
                out.get_or_insert_with(|| bytes.to_vec())[pos + q] = b'\'';
            }
            pos = end + 1;
        } else {
            pos = record_end(bytes, pos).1;
        }
    }
    out.map_or(std::borrow::Cow::Borrowed(bytes), std::borrow::Cow::Owned)
}

/// Nothing but white space and commas: a row the reader yields as nulls.
fn is_blank(text: &[u8]) -> bool {
    text.iter().all(|&b| b.is_ascii_whitespace() || b == b',')
}

/// The record starting at `pos`, walked byte by byte with quotes respected: its end (exclusive,
/// before the newline, or the end of `bytes`), the line breaks inside it (quoted fields may
/// span lines), its field count, whether it is blank, and the first field where text follows a
/// closing quote.
fn record_at(bytes: &[u8], pos: usize) -> (usize, usize, usize, bool, Option<usize>, Option<usize>) {
    let (mut in_quotes, mut newlines, mut n_fields, mut stray) = (false, 0, 1, None);
    let mut opened_in = 0;
    let mut i = pos;
    let end = loop {
        let Some(&b) = bytes.get(i) else { break bytes.len() };
        match b {
            b'"' => {
                in_quotes = !in_quotes;
                if in_quotes {
                    opened_in = n_fields;
                }
                // A closing quote ends its field: a comma, a line end or a doubled quote may follow.
                let next = bytes.get(i + 1).copied();
                if !in_quotes && !matches!(next, None | Some(b',' | b'\n' | b'\r' | b'"')) && stray.is_none() {
                    stray = Some(n_fields);
                }
            }
            b'\n' if !in_quotes => break i,
            b'\n' => newlines += 1,
            b',' if !in_quotes => n_fields += 1,
            _ => {}
        }
        i += 1;
    };
    (end, newlines, n_fields, is_blank(&bytes[pos..end]), stray, in_quotes.then_some(opened_in))
}

/// End of the record starting at `pos` (exclusive, before the newline), the start of the next
/// one, and how many line breaks were consumed (quoted fields may span lines).
fn record_end(bytes: &[u8], pos: usize) -> (usize, usize, usize) {
    let mut in_quotes = false;
    let mut newlines = 0;
    let mut i = pos;
    while i < bytes.len() {
        match bytes[i] {
            b'"' => in_quotes = !in_quotes,
            b'\n' if !in_quotes => return (i, i + 1, newlines + 1),
            b'\n' => newlines += 1,
            _ => {}
        }
        i += 1;
    }
    (bytes.len(), bytes.len(), newlines)
}

/// Comma-separated fields of one record, unquoted and trimmed.
fn split_fields(text: &[u8]) -> Vec<String> {
    let mut fields = Vec::new();
    let mut current = Vec::new();
    let mut in_quotes = false;
    let mut i = 0;
    while i < text.len() {
        let b = text[i];
        match b {
            b'"' if in_quotes && text.get(i + 1) == Some(&b'"') => {
                current.push(b'"');
                i += 1;
            }
            b'"' => in_quotes = !in_quotes,
            b',' if !in_quotes => fields.push(std::mem::take(&mut current)),
            _ => current.push(b),
        }
        i += 1;
    }
    fields.push(current);
    fields.into_iter().map(|f| String::from_utf8_lossy(&f).trim().to_string()).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn comments_blank_lines_bom_and_crlf_keep_line_numbers_right() {
        let layout = scan(b"\xef\xbb\xbf# note\r\na,b\r\n1,2\r\n\r\n# mid\r\n3,\"4\n5\"\r\n6,7").unwrap();
        assert_eq!(layout.header_line, 2);
        assert_eq!(layout.header, vec!["a", "b"]);
        let lines: Vec<_> = layout.records.iter().map(|r| (r.line, r.n_fields, r.blank)).collect();
        assert_eq!(lines, vec![(3, 2, false), (4, 1, true), (6, 2, false), (8, 2, false)]);
    }

    #[test]
    fn records_cut_at_any_byte_resume_where_they_stopped() {
        let text = b"# c\na,b\n1,\"x\ny\"\n# mid\n\n3,4\n5,6";
        let whole = scan(text).unwrap();
        let header = scan_header(text).unwrap();
        for cut in header.data_start..text.len() {
            let first = scan_records(&text[header.data_start..cut], header.data_line, false);
            let rest = scan_records(&text[header.data_start + first.consumed..], first.next_line, true);
            let joined: Vec<RecordLine> = first.records.into_iter().chain(rest.records).collect();
            assert_eq!(joined, whole.records, "cut at {cut}");
        }
    }

    /// `scan_records` without the vectorised pass: every record walked byte by byte, a comment
    /// to its line end.
    fn walk_records(bytes: &[u8], first_line: usize, at_end: bool) -> Records {
        let (mut records, mut line, mut pos) = (Vec::new(), first_line, 0);
        while pos < bytes.len() {
            let (end, newlines, n_fields, blank, stray_quote, unclosed_quote) = if bytes[pos] == b'#' {
                let end = bytes[pos..].iter().position(|&b| b == b'\n').map_or(bytes.len(), |e| pos + e);
                (end, 0, 1, false, None, None)
            } else {
                record_at(bytes, pos)
            };
            if !at_end && end == bytes.len() {
                break;
            }
            let start_line = line;
            line += newlines + usize::from(end < bytes.len());
            let comment = bytes[pos] == b'#';
            let too_long = overlong(bytes, pos, end);
            pos = if end < bytes.len() { end + 1 } else { end };
            if !comment {
                records.push(RecordLine { line: start_line, n_fields, blank, stray_quote, too_long, unclosed_quote });
            }
        }
        Records { records, consumed: pos, next_line: line }
    }

    #[test]
    fn the_vectorised_record_search_agrees_with_a_byte_walk() {
        let pieces: [&[u8]; 14] = [
            b"a",
            b",",
            b" ",
            b"\t",
            b"\r",
            b"\n",
            b"\"",
            b"\"\"",
            b"1.5",
            b"#",
            b"x,\"y\nz\",w",
            b"\xc2\xb0",
            b",,",
            b"",
        ];
        // Every sequence of four pieces (empty ones included), at the end of the file or not.
        let n = pieces.len();
        for code in 0..n * n * n * n {
            let text: Vec<u8> = [code % n, code / n % n, code / (n * n) % n, code / (n * n * n)]
                .iter()
                .flat_map(|&k| pieces[k].iter().copied())
                .collect();
            for at_end in [false, true] {
                assert_eq!(
                    scan_records(&text, 3, at_end),
                    walk_records(&text, 3, at_end),
                    "{:?}, at end {at_end}",
                    String::from_utf8_lossy(&text)
                );
            }
        }
    }

    #[test]
    fn a_quote_in_a_comment_opens_nothing_but_a_hash_inside_a_quoted_field_is_data() {
        let text = b"# by \"ann\nseries,t\n\"two\n# lines\",1\n# \"x\nb,2\n";
        let fixed = comment_quotes_neutralised(text);
        assert_eq!(&*fixed, &b"# by 'ann\nseries,t\n\"two\n# lines\",1\n# 'x\nb,2\n"[..]);
        let layout = scan(text).unwrap();
        assert_eq!(layout.header_line, 2);
        let lines: Vec<usize> = layout.records.iter().map(|r| r.line).collect();
        assert_eq!(lines, [3, 6]);
        assert!(matches!(comment_quotes_neutralised(b"a,b\n1,2\n"), std::borrow::Cow::Borrowed(_)));
    }

    #[test]
    fn a_file_of_comments_has_no_header() {
        assert_eq!(scan(b"# only\n\n"), None);
        assert_eq!(scan(b""), None);
    }
}
