//! A large osmometry file read a block of records at a time, so that neither its bytes nor
//! its text are ever in memory whole: each block is scanned for its line numbers, parsed by
//! polars under the file's own header, checked and converted like a whole file, and its
//! readings grouped at once. Checks that need every row of a column (every temperature above
//! 200 °C, ...) are decided after the last block; where a file holds several errors, a later
//! block's row error can be reported before such a column-wide refusal.

use super::scan::{scan_header, scan_records, Layout};
use super::separators::Separators;
use super::{
    check_structure, check_utf8_from, ignored_columns, locate_roles, parse_header_cell, parse_with_polars,
    read_file_owned, read_osmometry_sparing, FileContents, OsmometryColumns, ReadOptions, RefusedSeries, Role, Table,
};
use crate::dataset::GroupedReadings;
use crate::dataset::Volumes;
use crate::error::InputError;
use std::collections::HashMap;
use std::io::Read;

/// Bytes read per block of a large osmometry file: a streamed campaign holds a few blocks'
/// readings at a time (the size was chosen by measurement, docs/performance.md).
pub const BLOCK_BYTES: usize = 256 << 10;

/// Reads one CSV from `source`: an osmometry file larger than `block_bytes` a block at a
/// time, any other file whole.
pub fn read_source(
    name: &str,
    file_index: usize,
    source: &mut (dyn Read + Send),
    options: &ReadOptions,
    block_bytes: usize,
) -> Result<FileContents, InputError> {
    match BlockReader::open(name, file_index, source, options, block_bytes)? {
        Opened::Whole(contents) => Ok(*contents),
        Opened::Blocks(mut reader) => {
            while reader.next_block()? {}
            reader.finish()
        }
    }
}

/// What [`BlockReader::open`] found.
pub enum Opened<'a> {
    /// The file was small or not an osmometry file: read whole.
    Whole(Box<FileContents>),
    /// An osmometry file larger than one block, ready to be read block by block.
    Blocks(Box<BlockReader<'a>>),
}

/// A large osmometry file being read a block at a time: each [`BlockReader::next_block`]
/// adds one block's readings to [`BlockReader::readings`], from which a caller may take the
/// series the file has moved past ([`GroupedReadings::take_finished`]).
pub struct BlockReader<'a> {
    name: &'a str,
    file_index: usize,
    /// The file, semicolon- or tab-separated text rewritten to commas.
    source: Separators<'a>,
    options: &'a ReadOptions,
    block_bytes: usize,
    buffer: Vec<u8>,
    at_end: bool,
    header_line: usize,
    fields: Vec<String>,
    header_bytes: Vec<u8>,
    cells: Vec<super::HeaderCell>,
    roles: HashMap<Role, usize>,
    line: usize,
    merged: Merged,
    any_row: bool,
    /// The readings grouped so far.
    pub readings: GroupedReadings,
    /// Series refused for a value so far (their rows set aside).
    pub refused: Vec<RefusedSeries>,
}

impl<'a> BlockReader<'a> {
    /// Reads the first block and the header; a file that is not an osmometry file larger than
    /// `block_bytes` is read whole at once.
    pub fn open(
        name: &'a str,
        file_index: usize,
        source: &'a mut (dyn Read + Send),
        options: &'a ReadOptions,
        block_bytes: usize,
    ) -> Result<Opened<'a>, InputError> {
        let io = |e| read_error(name, e);
        let mut source = Separators::new(source);
        let mut buffer = Vec::new();
        let mut at_end = fill(&mut source, &mut buffer, block_bytes).map_err(io)?;
        // Read on until the header line is complete (a block may end inside it) or the file ends.
        let header = loop {
            match scan_header(&buffer) {
                Some(h) if at_end || buffer[..h.data_start].ends_with(b"\n") => break Some(h),
                None if at_end => break None,
                // A header line longer than a block: read on by the buffer's own length, so
                // that rescanning from its start stays linear in the line's length.
                _ if buffer.len() > super::scan::MAX_RECORD_BYTES => {
                    super::check_line_ends(name, &buffer)?;
                    let field = super::scan::overlong(&buffer, 0, buffer.len()).unwrap_or(1);
                    return Err(super::too_long(name, 1, None, field));
                }
                _ => {
                    let more = buffer.len().max(block_bytes);
                    at_end = fill(&mut source, &mut buffer, more).map_err(io)?
                }
            }
        };
        // Judged on the header's whole line (a first block may end before its line end).
        super::check_line_ends(name, &buffer)?;
        let header = header.filter(|_| !at_end);
        let cells: Vec<super::HeaderCell> =
            header.as_ref().map(|h| h.fields.iter().map(|f| parse_header_cell(f)).collect()).unwrap_or_default();
        let mut cells = cells;
        super::map_columns(&mut cells, &options.columns);
        let osmometry = header.is_some()
            && cells.iter().any(|c| matches!(c.role, Some(Role::Pressure) | Some(Role::Head)))
            && std::str::from_utf8(&buffer[..header.as_ref().map_or(0, |h| h.data_start)]).is_ok();
        let Some(header) = header.filter(|_| osmometry) else {
            source.read_to_end(&mut buffer).map_err(io)?;
            return read_file_owned(name, file_index, buffer, options).map(|c| Opened::Whole(Box::new(c)));
        };
        check_utf8_from(name, &buffer[..header.data_start], 1)?;
        let roles = locate_roles(name, header.line, &cells)?;
        let header_bytes = buffer[..header.data_start].to_vec();
        buffer.drain(..header.data_start);
        Ok(Opened::Blocks(Box::new(BlockReader {
            name,
            file_index,
            source,
            options,
            block_bytes,
            buffer,
            at_end,
            header_line: header.line,
            fields: header.fields,
            header_bytes,
            cells,
            roles,
            line: header.data_line,
            merged: Merged::default(),
            any_row: false,
            readings: GroupedReadings::default(),
            refused: Vec::new(),
        })))
    }

    /// Header cells that were not recognised and so are not used.
    pub fn ignored_columns(&self) -> Vec<String> {
        ignored_columns(&self.cells)
    }

    /// Reads, checks and groups the records of the block in hand, then reads the next block;
    /// false once the file is done.
    pub fn next_block(&mut self) -> Result<bool, InputError> {
        let name = self.name;
        let block = scan_records(&self.buffer, self.line, self.at_end);
        if !block.records.is_empty() {
            let text = &self.buffer[..block.consumed];
            check_utf8_from(name, text, self.line)?;
            self.any_row |= block.records.iter().any(|r| !r.blank);
            let layout = Layout { header_line: self.header_line, header: self.fields.clone(), records: block.records };
            check_structure(name, &layout)?;
            let bytes = [&self.header_bytes[..], text].concat();
            let frame = parse_with_polars(name, &bytes, Some(1))?;
            let mut table =
                Table::from_frame(name, self.file_index, self.cells.clone(), layout, self.roles.clone(), frame, true)?;
            let columns = self.read_table(&mut table)?;
            drop(table);
            columns.group_into(&mut self.readings);
        }
        self.buffer.drain(..block.consumed);
        self.line = block.next_line;
        if self.at_end {
            return Ok(false);
        }
        // No whole record in hand (a line longer than a block): double what is held rather than
        // add a block, so that the rescans of the line cost twice its length, not its square.
        if block.consumed == 0 {
            if let Some(field) = super::scan::overlong(&self.buffer, 0, self.buffer.len()) {
                let column = self.fields.get(field - 1).map(String::as_str);
                return Err(super::too_long(name, self.line, column, field));
            }
        }
        let more = if block.consumed == 0 { self.buffer.len().max(self.block_bytes) } else { self.block_bytes };
        self.at_end = fill(&mut self.source, &mut self.buffer, more).map_err(|e| read_error(name, e))?;
        Ok(true)
    }

    /// One block's readings, and what spans the file added to [`Merged`] (adding again after
    /// a refusal changes nothing: the same rows are seen again in the same order). Rows of a
    /// series refused in an earlier block are set aside; a series refused here loses the
    /// readings earlier blocks gave it.
    fn read_table(&mut self, table: &mut Table) -> Result<OsmometryColumns, InputError> {
        if !self.refused.is_empty() {
            let names: std::collections::HashSet<&str> = self.refused.iter().map(|r| r.series.as_str()).collect();
            let aside: Vec<usize> =
                table.rows().filter(|&r| table.series(r).is_ok_and(|n| names.contains(&*n))).collect();
            for r in aside {
                table.layout.records[r].blank = true;
            }
        }
        let mut refused = Vec::new();
        let columns = read_osmometry_sparing(table, self.options, &mut refused)?;
        refused.sort_by_key(|r| r.error.line);
        for r in &refused {
            self.readings.remove(&r.series);
        }
        self.refused.extend(refused);
        self.merged.add(table)?;
        Ok(columns)
    }

    /// v̄ and V1 the file gives for `series` so far (the first given).
    pub fn volumes_of(&self, series: &str) -> Option<Volumes> {
        self.merged.seen_volumes.get(series).map(|&i| self.merged.volumes[i].1)
    }

    /// The solvent the file gives for `series` so far.
    pub fn solvent_of(&self, series: &str) -> Option<&str> {
        self.merged.seen_solvent.get(series).map(|&i| self.merged.solvents[i].1.as_str())
    }

    /// The checks that need the whole file, then everything read (the readings not taken).
    pub fn finish(mut self) -> Result<FileContents, InputError> {
        if !self.any_row {
            return Err(InputError::at(
                self.name,
                self.header_line,
                None,
                None,
                "the header has no data rows under it",
            ));
        }
        self.merged.decide()?;
        let ignored_columns = self.ignored_columns();
        Ok(FileContents {
            readings: self.readings,
            volumes: self.merged.volumes.into_iter().map(|(s, v, _)| (s, v)).collect(),
            solvents: self.merged.solvents.into_iter().map(|(s, v, _)| (s, v)).collect(),
            ignored_columns,
            refused: self.refused,
            ..FileContents::default()
        })
    }
}

fn read_error(name: &str, e: std::io::Error) -> InputError {
    InputError::file(name, format!("cannot read the file: {e}"))
}

/// Reads until `buffer` holds at least `block_bytes` or the source ends; true at the end.
fn fill(source: &mut (dyn Read + Send), buffer: &mut Vec<u8>, block_bytes: usize) -> std::io::Result<bool> {
    let target = buffer.len() + block_bytes;
    while buffer.len() < target {
        let before = buffer.len();
        source.take((target - before) as u64).read_to_end(buffer)?;
        if buffer.len() == before {
            return Ok(true);
        }
    }
    Ok(false)
}

/// What the blocks give that spans the file: one solvent and one v̄/V1 per series, and the
/// column-wide checks.
#[derive(Default)]
struct Merged {
    solvents: Vec<(String, String, usize)>,
    volumes: Vec<(String, Volumes, usize)>,
    seen_solvent: HashMap<String, usize>,
    seen_volumes: HashMap<String, usize>,
    /// Per column: does every value so far exceed its limit, and the refusal at the file's
    /// first row.
    checks: Vec<(usize, bool, Option<InputError>)>,
}

impl Merged {
    fn add(&mut self, table: &Table) -> Result<(), InputError> {
        for (series, solvent, row) in table.solvents()? {
            match self.seen_solvent.get(&series).map(|&i| &self.solvents[i].1) {
                Some(first) if *first != solvent => {
                    let col = table.column(Role::Solvent).unwrap_or(0);
                    return Err(table.refuse(col, row, "a series must keep one solvent on every row"));
                }
                Some(_) => {}
                None => {
                    self.seen_solvent.insert(series.clone(), self.solvents.len());
                    self.solvents.push((series, solvent, row));
                }
            }
        }
        for (series, v, row) in table.volumes()? {
            match self.seen_volumes.get(&series).map(|&i| &self.volumes[i].1) {
                Some(first) if *first != v => {
                    let col = table.column(Role::SpecificVolume).unwrap_or(0);
                    return Err(table.refuse(
                        col,
                        row,
                        "a series must keep one specific volume and one molar volume on every row",
                    ));
                }
                Some(_) => {}
                None => {
                    self.seen_volumes.insert(series.clone(), self.volumes.len());
                    self.volumes.push((series, v, row));
                }
            }
        }
        for check in table.take_deferred() {
            match self.checks.iter_mut().find(|(c, _, _)| *c == check.column) {
                Some((_, all, refusal)) => {
                    *all &= check.all_exceed;
                    if refusal.is_none() {
                        *refusal = check.refusal;
                    }
                }
                None => self.checks.push((check.column, check.all_exceed, check.refusal)),
            }
        }
        Ok(())
    }

    fn decide(&mut self) -> Result<(), InputError> {
        match self.checks.iter_mut().find(|(_, all, refusal)| *all && refusal.is_some()) {
            Some((_, _, refusal)) => Err(refusal.take().expect("checked above")),
            None => Ok(()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::input::read_file;

    /// Three series over four temperatures, with the things that make block edges awkward:
    /// comments, blank lines, CRLF, a quoted name with a comma and a line break.
    fn file(temperature_c: impl Fn(usize) -> f64, solvent_of_last: &str) -> Vec<u8> {
        let mut text =
            String::from("# invented\r\nseries,solvent,temperature (C),concentration (g/L),pressure (Pa)\r\n");
        for (k, name) in ["a", "\"b, the\nsecond\"", "c"].iter().enumerate() {
            for t in 0..4 {
                for i in 1..=5 {
                    let row = k * 20 + t * 5 + i;
                    let solvent = if k == 2 && t == 3 { solvent_of_last } else { "mirane" };
                    text.push_str(&format!(
                        "{name},{solvent},{},{},{}\r\n",
                        temperature_c(t),
                        i,
                        10.0 * i as f64 + row as f64 * 0.01
                    ));
                    if row % 17 == 0 {
                        text.push_str("# note\r\n\r\n");
                    }
                }
            }
        }
        text.into_bytes()
    }

    fn blocks(bytes: &[u8], size: usize) -> Result<FileContents, InputError> {
        read_source("f.csv", 0, &mut &bytes[..], &ReadOptions::default(), size)
    }

    #[test]
    fn a_file_read_in_blocks_of_any_size_is_read_as_it_is_whole() {
        let bytes = file(|t| 20.0 + 5.0 * t as f64, "mirane");
        let whole = read_file("f.csv", 0, &bytes, &ReadOptions::default()).unwrap();
        // Found by the property test: a first block that ends between the header's \r and \n.
        let header_end = bytes.windows(2).skip(12).position(|w| w == b"\r\n").unwrap() + 12;
        for size in [header_end + 1, 40, 64, 100, 333, 1000, 1 << 20] {
            assert_eq!(blocks(&bytes, size).unwrap(), whole, "blocks of {size} bytes");
        }
    }

    #[test]
    fn an_error_in_a_later_block_names_the_line_a_whole_read_names() {
        let mut bytes = file(|t| 20.0 + 5.0 * t as f64, "mirane");
        let at = bytes.len() - 30;
        bytes.splice(at..at + 1, b"x".iter().copied());
        let whole = read_file("f.csv", 0, &bytes, &ReadOptions::default()).unwrap_err().to_string();
        for size in [50, 200, 1000] {
            assert_eq!(blocks(&bytes, size).unwrap_err().to_string(), whole);
        }
    }

    /// Every odd pressure a block can hold gives what a whole read gives, a refusal quoting the
    /// value or the same readings.
    #[test]
    fn odd_numbers_in_a_later_block_read_as_a_whole_read_reads_them() {
        let good = file(|t| 20.0 + 5.0 * t as f64, "mirane");
        let text = String::from_utf8(good).unwrap();
        let last = text.trim_end().rsplit_once(',').unwrap().1.to_string();
        for odd in [
            "NaN", "inf", "-inf", "1e-320", "-3.5", "\"1,5\"", "1.5 ", " 1.5", "+1.5", "1.", ".5", "\"2.5\"", "",
            "1e400", "0x10", "1e", "12abc",
        ] {
            let at = text.rfind(&last).unwrap();
            let bytes = format!("{}{odd}{}", &text[..at], &text[at + last.len()..]).into_bytes();
            let whole = read_file("f.csv", 0, &bytes, &ReadOptions::default())
                .map(|c| format!("{:?}", c.readings.into_series()));
            for size in [60, 400] {
                let streamed = blocks(&bytes, size).map(|c| format!("{:?}", c.readings.into_series()));
                match (&whole, &streamed) {
                    (Ok(w), Ok(b)) => assert_eq!(w, b, "{odd:?}"),
                    (Err(w), Err(b)) => assert_eq!(w.to_string(), b.to_string(), "{odd:?}"),
                    _ => panic!("{odd:?}: whole {whole:?}, in blocks of {size} {streamed:?}"),
                }
            }
        }
    }

    #[test]
    fn column_wide_and_per_series_checks_span_the_blocks() {
        // Every temperature above 200 °C: kelvin under a (C) header, refused at the first row.
        let kelvin = file(|t| 293.15 + 5.0 * t as f64, "mirane");
        let whole = read_file("f.csv", 0, &kelvin, &ReadOptions::default()).unwrap_err().to_string();
        assert!(whole.contains("look like kelvin"), "{whole}");
        assert_eq!(blocks(&kelvin, 100).unwrap_err().to_string(), whole);
        // A series that changes solvent in a later block.
        let two = file(|t| 20.0 + 5.0 * t as f64, "ostrol");
        let whole = read_file("f.csv", 0, &two, &ReadOptions::default()).unwrap_err().to_string();
        assert!(whole.contains("one solvent"), "{whole}");
        assert_eq!(blocks(&two, 100).unwrap_err().to_string(), whole);
    }
}
