//! Semicolon- and tab-separated text, the usual spreadsheet export in many locales, read as the
//! comma-separated text the rest of the reader takes. The separator is judged from the header
//! line; in a semicolon- or tab-separated file a comma inside a number is unambiguous and is
//! the decimal mark (`0,004` is 0.004), while in a comma-separated file it stays refused.

use std::io::Read;

/// The field separator of the header line `line` (outside quotes): `;` or tab where they
/// outnumber commas, else `,`.
pub fn separator_of(line: &[u8]) -> u8 {
    let (mut quoted, mut counts) = (false, [0usize; 3]);
    for &b in line {
        match b {
            b'"' => quoted = !quoted,
            b',' if !quoted => counts[0] += 1,
            b';' if !quoted => counts[1] += 1,
            b'\t' if !quoted => counts[2] += 1,
            _ => {}
        }
    }
    match counts {
        [c, s, _] if s > c && s > 0 => b';',
        [c, _, t] if t > c && t > 0 => b'\t',
        _ => b',',
    }
}

/// One line of a file separated by `separator`, rewritten with commas: a quoted field is kept
/// as it is, a number with a decimal comma gets a point, other text holding a comma or a quote
/// is quoted. Comment lines are kept. `line` excludes its line end.
pub fn to_commas(line: &[u8], separator: u8, out: &mut Vec<u8>) {
    let (body, cr) = match line.strip_suffix(b"\r") {
        Some(body) => (body, true),
        None => (line, false),
    };
    if body.first() == Some(&b'#') {
        out.extend_from_slice(line);
        return;
    }
    let mut start = 0;
    let mut quoted = false;
    let mut first = true;
    for i in 0..=body.len() {
        match body.get(i) {
            Some(b'"') => quoted = !quoted,
            Some(&b) if b == separator && !quoted => {}
            Some(_) => continue,
            None => {}
        }
        if body.get(i).is_some_and(|&b| b != separator || quoted) {
            continue;
        }
        if !first {
            out.push(b',');
        }
        first = false;
        field(&body[start..i], out);
        start = i + 1;
    }
    if cr {
        out.push(b'\r');
    }
}

fn field(text: &[u8], out: &mut Vec<u8>) {
    let trimmed = text.trim_ascii();
    if trimmed.first() == Some(&b'"') {
        out.extend_from_slice(text);
    } else if decimal_comma_number(trimmed) {
        out.extend(text.iter().map(|&b| if b == b',' { b'.' } else { b }));
    } else if text.iter().any(|&b| b == b',' || b == b'"') {
        out.push(b'"');
        for &b in text {
            out.push(b);
            if b == b'"' {
                out.push(b'"');
            }
        }
        out.push(b'"');
    } else {
        out.extend_from_slice(text);
    }
}

/// `[+-]digits,digits[e[+-]digits]`: a number whose decimal mark is a comma (and which has no
/// other separator that could be one for thousands).
fn decimal_comma_number(text: &[u8]) -> bool {
    let text = text.strip_prefix(b"-").or_else(|| text.strip_prefix(b"+")).unwrap_or(text);
    let (mantissa, exponent) = match text.iter().position(|&b| b == b'e' || b == b'E') {
        Some(e) => (&text[..e], Some(&text[e + 1..])),
        None => (text, None),
    };
    let Some(comma) = mantissa.iter().position(|&b| b == b',') else { return false };
    let (whole, fraction) = (&mantissa[..comma], &mantissa[comma + 1..]);
    let digits = |s: &[u8]| s.iter().all(u8::is_ascii_digit);
    let exponent_ok = exponent.is_none_or(|e| {
        let e = e.strip_prefix(b"-").or_else(|| e.strip_prefix(b"+")).unwrap_or(e);
        !e.is_empty() && digits(e)
    });
    (!whole.is_empty() || !fraction.is_empty()) && digits(whole) && digits(fraction) && exponent_ok
}

/// A reader that passes comma-separated text through and rewrites semicolon- or tab-separated
/// text to commas a line at a time ([`to_commas`]), judging the separator from the first line
/// that is neither blank nor a comment.
pub struct Separators<'a> {
    inner: &'a mut (dyn Read + Send),
    /// `None` until the header has been seen.
    separator: Option<u8>,
    /// Bytes read and not yet given out (in rewrite mode, up to a line end).
    pending: Vec<u8>,
    /// Bytes ready to be given out.
    ready: Vec<u8>,
    at_end: bool,
}

impl<'a> Separators<'a> {
    /// Wraps `inner`.
    pub fn new(inner: &'a mut (dyn Read + Send)) -> Self {
        Separators { inner, separator: None, pending: Vec::new(), ready: Vec::new(), at_end: false }
    }

    /// Reads on until the header line is complete (or the text ends) and judges the separator.
    fn judge(&mut self) -> std::io::Result<()> {
        let mut chunk = [0u8; 1 << 16];
        loop {
            let mut start = 0;
            let mut header = None;
            while let Some(end) = self.pending[start..].iter().position(|&b| b == b'\n').map(|e| start + e) {
                let line = self.pending[start..end].trim_ascii();
                if !line.is_empty() && line.first() != Some(&b'#') && !line.starts_with(b"\xef\xbb\xbf#") {
                    header = Some(start..end);
                    break;
                }
                start = end + 1;
            }
            if header.is_none() && !self.at_end && self.pending.len() < super::scan::MAX_RECORD_BYTES {
                let n = self.inner.read(&mut chunk)?;
                self.at_end = n == 0;
                self.pending.extend_from_slice(&chunk[..n]);
                continue;
            }
            let line = header.map_or(&self.pending[start..], |r| &self.pending[r]);
            self.separator = Some(separator_of(line));
            if self.separator == Some(b',') {
                self.ready = std::mem::take(&mut self.pending);
            }
            return Ok(());
        }
    }

    /// Rewrites every complete line in `pending` (all of it at the end) into `ready`.
    fn rewrite(&mut self, separator: u8) {
        let upto = if self.at_end {
            self.pending.len()
        } else {
            match self.pending.iter().rposition(|&b| b == b'\n') {
                Some(p) => p + 1,
                None => return,
            }
        };
        for line in self.pending[..upto].split_inclusive(|&b| b == b'\n') {
            let (body, newline) = match line.strip_suffix(b"\n") {
                Some(body) => (body, true),
                None => (line, false),
            };
            to_commas(body, separator, &mut self.ready);
            if newline {
                self.ready.push(b'\n');
            }
        }
        self.pending.drain(..upto);
    }
}

impl Read for Separators<'_> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        if self.separator.is_none() {
            self.judge()?;
        }
        loop {
            if !self.ready.is_empty() {
                let n = buf.len().min(self.ready.len());
                buf[..n].copy_from_slice(&self.ready[..n]);
                self.ready.drain(..n);
                return Ok(n);
            }
            match self.separator {
                Some(b',') => return self.inner.read(buf),
                Some(separator) => {
                    if self.at_end {
                        self.rewrite(separator);
                        if self.ready.is_empty() {
                            return Ok(0);
                        }
                        continue;
                    }
                    let mut chunk = vec![0u8; buf.len().max(1 << 16)];
                    let n = self.inner.read(&mut chunk)?;
                    self.at_end = n == 0;
                    self.pending.extend_from_slice(&chunk[..n]);
                    self.rewrite(separator);
                }
                None => unreachable!("judged above"),
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rewritten(text: &str) -> String {
        let mut bytes = text.as_bytes();
        let mut out = String::new();
        Separators::new(&mut bytes).read_to_string(&mut out).unwrap();
        out
    }

    #[test]
    fn semicolon_and_tab_files_read_as_commas_with_decimal_points() {
        let semi = "# a note; with, punctuation\r\nseries;temperature (C);concentration (g/L);pressure (Pa)\r\nPX, batch 2;20,5;2,0;24,80\r\n\"a;b\";25;-1,5e-3;1\r\n";
        assert_eq!(
            rewritten(semi),
            "# a note; with, punctuation\r\nseries,temperature (C),concentration (g/L),pressure (Pa)\r\n\"PX, batch 2\",20.5,2.0,24.80\r\n\"a;b\",25,-1.5e-3,1\r\n"
        );
        assert_eq!(rewritten("a\tb\n1,5\t2\n"), "a,b\n1.5,2\n");
        // A comma file passes through untouched, decimal commas and all (they stay refused).
        let comma = "a,b\n\"1,5\",2\n";
        assert_eq!(rewritten(comma), comma);
        // Thousands and decimal marks together are not guessed at.
        assert_eq!(rewritten("a;b\n1.026,5;2\n"), "a,b\n\"1.026,5\",2\n");
    }

    #[test]
    fn the_rewrite_is_the_same_whatever_the_reads_return() {
        struct Trickle<'b>(&'b [u8]);
        impl Read for Trickle<'_> {
            fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
                let n = buf.len().min(self.0.len()).min(3);
                buf[..n].copy_from_slice(&self.0[..n]);
                self.0 = &self.0[n..];
                Ok(n)
            }
        }
        let text = "x;y\n1,5;2\n3;4,25\n5;6";
        let mut trickle = Trickle(text.as_bytes());
        let mut out = String::new();
        Separators::new(&mut trickle).read_to_string(&mut out).unwrap();
        assert_eq!(out, rewritten(text));
        assert_eq!(out, "x,y\n1.5,2\n3,4.25\n5,6");
    }
}
