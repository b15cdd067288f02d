//! Water-level files: one parser for `time,level[,flag]` CSV (plain or gzip, told apart by the
//! gzip magic bytes `1f 8b`, never by the file name), feeding two consumers:
//!
//! - [`summarize`]: the streaming pass behind the season table. It keeps per-day totals in
//!   local standard time (a few dozen bytes per calendar day of record), monthly means and
//!   the sampling interval. For time-sorted input its memory does not grow with the number of
//!   rows; see [`summarize`] for unsorted input.
//! - [`read_levels`]: every reading, sorted by time, for tidal analysis.
//!
//! Times are ISO 8601 with `Z` or an offset; levels are converted from the declared units to
//! metres. Empty fields, `NaN` (any case) and the configured sentinel mean "missing". The
//! optional `flag` column is accepted and not interpreted. Duplicate times are an error naming
//! both lines. Times outside the years 1800 to 2200 are taken for typing errors and rejected.
//!
//! Speed: common time shapes are computed arithmetically (chrono handles the rest), plain
//! decimals take an exact fast path (the standard parser handles the rest), and lines are
//! split in place in the reader's own buffer; see `model/benches/ingest.rs`.

use std::collections::BTreeMap;
use std::io::BufRead;

use chrono::{DateTime, FixedOffset};
use flate2::bufread::MultiGzDecoder;
use serde::{Deserialize, Serialize};

use crate::daily::{DayTotals, MonthlyMean};

/// One international foot in metres, exactly (international yard and pound agreement, 1959).
pub const METRES_PER_FOOT: f64 = 0.3048;

const SECONDS_PER_DAY: i64 = 86_400;
/// 1800-01-01T00:00:00Z: earlier times are taken for typing errors.
const EARLIEST_TIME: i64 = -5_364_662_400;
/// 2201-01-01T00:00:00Z: later times are taken for typing errors.
const LATEST_TIME: i64 = 7_289_654_400;

/// The largest plausible level magnitude, metres from the datum: the largest tidal ranges
/// are about 16 m and gauge datums sit near the water, so +/-100 m only catches typing and
/// unit errors (common practice, no source).
pub const MAX_LEVEL_M: f64 = 100.0;

/// Errors reading a water-level file. Each names the source (file name or other label).
#[derive(Debug, thiserror::Error)]
pub enum IngestError {
    /// The underlying reader failed (including a corrupt gzip stream).
    #[error("{source_name}: read failed: {error}")]
    Io {
        /// The file or label being read.
        source_name: String,
        /// The I/O error.
        error: std::io::Error,
    },
    /// The file has no header line.
    #[error("{source_name}: empty file: expected a header `time,level` or `time,level,flag`")]
    Empty {
        /// The file or label being read.
        source_name: String,
    },
    /// The header is not `time,level` or `time,level,flag`.
    #[error(
        "{source_name}: line {line}: expected header `time,level` or `time,level,flag`, got {found:?}"
    )]
    BadHeader {
        /// The file or label being read.
        source_name: String,
        /// The header's line number (1-based).
        line: u64,
        /// The header as found.
        found: String,
    },
    /// A row whose field cannot be read.
    #[error("{source_name}: line {line}: field `{field}`: expected {expected}, got {text:?}")]
    Malformed {
        /// The file or label being read.
        source_name: String,
        /// The row's line number (1-based).
        line: u64,
        /// The field's name (`time`, `level`, or `row` for a wrong field count).
        field: &'static str,
        /// What was expected.
        expected: &'static str,
        /// The offending text.
        text: String,
    },
    /// Two rows carry the same time.
    #[error("{source_name}: lines {first_line} and {second_line}: duplicate time {time}")]
    Duplicate {
        /// The file or label being read.
        source_name: String,
        /// The earlier line (1-based).
        first_line: u64,
        /// The later line (1-based).
        second_line: u64,
        /// The repeated time (RFC 3339, UTC).
        time: String,
    },
}

/// The units a gauge declares for its levels.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum LevelUnits {
    /// Metres.
    #[serde(rename = "m")]
    Metres,
    /// International feet (0.3048 m).
    #[serde(rename = "ft")]
    Feet,
}

impl LevelUnits {
    /// The factor turning a level in these units into metres.
    pub fn to_metres(self) -> f64 {
        match self {
            LevelUnits::Metres => 1.0,
            LevelUnits::Feet => METRES_PER_FOOT,
        }
    }
}

/// How to read one gauge's level file.
#[derive(Debug, Clone, PartialEq)]
pub struct IngestOptions {
    /// The units the levels are written in.
    pub units: LevelUnits,
    /// A value (in the file's units) meaning "missing", besides empty and `NaN`.
    pub missing_sentinel: Option<f64>,
    /// The gauge's local standard time, which decides calendar days and months.
    pub utc_offset: FixedOffset,
}

impl Default for IngestOptions {
    /// Metres, no sentinel, days in UTC.
    fn default() -> Self {
        Self {
            units: LevelUnits::Metres,
            missing_sentinel: None,
            utc_offset: FixedOffset::east_opt(0).expect("zero offset is valid"),
        }
    }
}

/// Every reading of a file, sorted by time, missing values left out.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct LevelSeries {
    /// Reading times, Unix seconds (UTC), strictly increasing.
    pub times: Vec<i64>,
    /// Levels in metres, one per time.
    pub levels_m: Vec<f64>,
    /// Rows whose level was missing (empty, `NaN` or the sentinel).
    pub missing: u64,
}

/// What the streaming pass keeps of a level file.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelSummary {
    /// Per-day reading counts, maxima and sums in local standard time.
    pub days: DayTotals,
    /// Monthly mean levels, in time order, months without readings left out.
    pub monthly: Vec<MonthlyMean>,
    /// The median spacing between consecutive rows (file order), seconds; `None` with fewer
    /// than two distinct times.
    pub sampling_interval_s: Option<i64>,
    /// Data rows read (missing ones included).
    pub rows: u64,
    /// Rows with a level.
    pub readings: u64,
    /// Rows whose level was missing.
    pub missing: u64,
    /// Whether the rows were already in time order.
    pub was_sorted: bool,
}

/// One parsed row.
#[derive(Debug, Clone, Copy)]
struct Row {
    line: u64,
    time: i64,
    level_m: Option<f64>,
}

/// Reads every reading of a level file, sorted by time. Memory: about 24 bytes per row while
/// reading; the result holds 16 bytes per reading.
pub fn read_levels(
    reader: impl BufRead,
    options: &IngestOptions,
    source_name: &str,
) -> Result<LevelSeries, IngestError> {
    let mut rows: Vec<(i64, u64, f64)> = Vec::new();
    for_each_row(reader, options, source_name, |row| {
        rows.push((row.time, row.line, row.level_m.unwrap_or(f64::NAN)));
        Ok(())
    })?;
    series_of_rows(rows, source_name)
}

/// Every reading of a level file and its streaming summary (as [`read_levels`] and
/// [`summarize`] give them) from one decoding of the file.
pub fn decode_levels(
    reader: impl BufRead,
    options: &IngestOptions,
    source_name: &str,
) -> Result<(LevelSeries, LevelSummary), IngestError> {
    let mut pass = SummaryPass {
        offset: i64::from(options.utc_offset.local_minus_utc()),
        source_name,
        ..SummaryPass::default()
    };
    let mut rows: Vec<(i64, u64, f64)> = Vec::new();
    for_each_row(reader, options, source_name, |row| {
        pass.accept(row)?;
        rows.push((row.time, row.line, row.level_m.unwrap_or(f64::NAN)));
        Ok(())
    })?;
    let summary = pass.finish()?;
    Ok((series_of_rows(rows, source_name)?, summary))
}

/// `(time, line, level or NaN)` rows in file order -> the sorted series, duplicates refused.
fn series_of_rows(
    mut rows: Vec<(i64, u64, f64)>,
    source_name: &str,
) -> Result<LevelSeries, IngestError> {
    if !rows.windows(2).all(|w| w[0].0 < w[1].0) {
        // Stable sort keeps file order among equal times, so the duplicate error names the
        // earlier line first.
        rows.sort_by_key(|r| r.0);
    }
    if let Some(w) = rows.windows(2).find(|w| w[0].0 == w[1].0) {
        return Err(duplicate(source_name, w[0].1, w[1].1, w[0].0));
    }
    let mut series = LevelSeries::default();
    for (time, _, level) in rows {
        if level.is_nan() {
            series.missing += 1;
        } else {
            series.times.push(time);
            series.levels_m.push(level);
        }
    }
    Ok(series)
}

/// The streaming pass: per-day totals, monthly means and the sampling interval, in one read.
///
/// Memory: per-day totals (24 bytes per calendar day spanned) and a table of row spacings
/// (one entry per distinct spacing). Duplicate times are caught against the previous row
/// while rows arrive in time order; the in-order prefix is remembered as runs of constant
/// spacing (a handful for a regular record with gaps). After the first out-of-order row, each
/// later row costs 16 bytes until the end of the pass, where the duplicate check is finished.
pub fn summarize(
    reader: impl BufRead,
    options: &IngestOptions,
    source_name: &str,
) -> Result<LevelSummary, IngestError> {
    let mut pass = SummaryPass {
        offset: i64::from(options.utc_offset.local_minus_utc()),
        source_name,
        ..SummaryPass::default()
    };
    for_each_row(reader, options, source_name, |row| pass.accept(row))?;
    pass.finish()
}

/// The state of the streaming pass.
#[derive(Default)]
struct SummaryPass<'a> {
    offset: i64,
    source_name: &'a str,
    days: DayTotals,
    checker: DuplicateChecker,
    spacings: BTreeMap<i64, u64>,
    /// The current streak of equal spacings, flushed into `spacings` when the spacing
    /// changes.
    streak_gap: i64,
    streak_len: u64,
    previous: Option<i64>,
    rows: u64,
    readings: u64,
}

impl SummaryPass<'_> {
    #[inline(always)]
    fn accept(&mut self, row: Row) -> Result<(), IngestError> {
        self.checker.push(row.time, row.line, self.source_name)?;
        if let Some(prev) = self.previous {
            let gap = (row.time - prev).abs();
            if gap != self.streak_gap {
                self.flush_streak();
                (self.streak_gap, self.streak_len) = (gap, 0);
            }
            self.streak_len += 1;
        }
        self.previous = Some(row.time);
        self.rows += 1;
        if let Some(level) = row.level_m {
            self.readings += 1;
            self.days
                .add((row.time + self.offset).div_euclid(SECONDS_PER_DAY), level);
        }
        Ok(())
    }

    fn flush_streak(&mut self) {
        if self.streak_len > 0 && self.streak_gap > 0 {
            *self.spacings.entry(self.streak_gap).or_insert(0) += self.streak_len;
        }
    }

    fn finish(mut self) -> Result<LevelSummary, IngestError> {
        self.flush_streak();
        let was_sorted = self.checker.tail.is_empty();
        self.checker.finish(self.source_name)?;
        Ok(LevelSummary {
            monthly: self.days.monthly_means(),
            days: self.days,
            sampling_interval_s: weighted_median(&self.spacings),
            rows: self.rows,
            readings: self.readings,
            missing: self.rows - self.readings,
            was_sorted,
        })
    }
}

/// The median of a histogram of spacings (the lower median for an even count).
fn weighted_median(histogram: &BTreeMap<i64, u64>) -> Option<i64> {
    let total: u64 = histogram.values().sum();
    if total == 0 {
        return None;
    }
    let half = total.div_ceil(2);
    let mut seen = 0;
    histogram.iter().find_map(|(&gap, &count)| {
        seen += count;
        (seen >= half).then_some(gap)
    })
}

fn duplicate(source_name: &str, first_line: u64, second_line: u64, time: i64) -> IngestError {
    let time = DateTime::from_timestamp(time, 0)
        .map(|t| t.to_rfc3339_opts(chrono::SecondsFormat::Secs, true))
        .unwrap_or_else(|| time.to_string());
    IngestError::Duplicate {
        source_name: source_name.to_owned(),
        first_line,
        second_line,
        time,
    }
}

/// A run of in-order rows with constant spacing and consecutive line numbers.
#[derive(Debug, Clone, Copy)]
struct Run {
    first_time: i64,
    step: i64,
    count: u64,
    first_line: u64,
}

impl Run {
    fn last_time(&self) -> i64 {
        self.first_time + self.step * (self.count as i64 - 1)
    }

    /// The line holding `time`, if this run has it.
    fn line_of(&self, time: i64) -> Option<u64> {
        if time < self.first_time || time > self.last_time() {
            return None;
        }
        if self.count == 1 {
            return (time == self.first_time).then_some(self.first_line);
        }
        let delta = time - self.first_time;
        (delta % self.step == 0).then(|| self.first_line + (delta / self.step) as u64)
    }
}

/// Finds duplicate times without keeping every row of time-ordered input.
#[derive(Debug, Default)]
struct DuplicateChecker {
    /// The in-order prefix, as runs in increasing time.
    runs: Vec<Run>,
    /// (time, line) of every row after the first out-of-order one.
    tail: Vec<(i64, u64)>,
}

impl DuplicateChecker {
    #[inline]
    fn push(&mut self, time: i64, line: u64, source_name: &str) -> Result<(), IngestError> {
        // Hot path: the row continues the current run.
        if let Some(run) = self.runs.last_mut()
            && self.tail.is_empty()
            && run.count > 1
            && time == run.last_time() + run.step
            && line == run.first_line + run.count
        {
            run.count += 1;
            return Ok(());
        }
        if !self.tail.is_empty() {
            self.tail.push((time, line));
            return Ok(());
        }
        let Some(run) = self.runs.last_mut() else {
            self.runs.push(Run {
                first_time: time,
                step: 0,
                count: 1,
                first_line: line,
            });
            return Ok(());
        };
        let last = run.last_time();
        let last_line = run.first_line + run.count - 1;
        if time == last {
            return Err(duplicate(source_name, last_line, line, time));
        }
        if time < last {
            self.tail.push((time, line));
            return Ok(());
        }
        let extends = line == last_line + 1
            && if run.count == 1 {
                run.step = time - last;
                true
            } else {
                time - last == run.step
            };
        if extends {
            run.count += 1;
        } else {
            self.runs.push(Run {
                first_time: time,
                step: 0,
                count: 1,
                first_line: line,
            });
        }
        Ok(())
    }

    fn finish(mut self, source_name: &str) -> Result<(), IngestError> {
        if self.tail.is_empty() {
            return Ok(());
        }
        self.tail.sort_by_key(|&(time, _)| time);
        if let Some(w) = self.tail.windows(2).find(|w| w[0].0 == w[1].0) {
            return Err(duplicate(source_name, w[0].1, w[1].1, w[0].0));
        }
        for &(time, line) in &self.tail {
            // Runs are in increasing, non-overlapping time order.
            let index = self.runs.partition_point(|run| run.last_time() < time);
            if let Some(first_line) = self.runs.get(index).and_then(|run| run.line_of(time)) {
                return Err(duplicate(source_name, first_line, line, time));
            }
        }
        Ok(())
    }
}

/// Detects gzip by its magic bytes and hands every data row to `sink`.
fn for_each_row<R: BufRead>(
    mut reader: R,
    options: &IngestOptions,
    source_name: &str,
    sink: impl FnMut(Row) -> Result<(), IngestError>,
) -> Result<(), IngestError> {
    /// Decompressed bytes are parsed in chunks of this size.
    const GZIP_CHUNK: usize = 256 * 1024;
    let io_error = |error| IngestError::Io {
        source_name: source_name.to_owned(),
        error,
    };
    let is_gzip = reader
        .fill_buf()
        .map_err(io_error)?
        .starts_with(&[0x1f, 0x8b]);
    if is_gzip {
        let decoder = MultiGzDecoder::new(reader);
        parse_rows(
            std::io::BufReader::with_capacity(GZIP_CHUNK, decoder),
            options,
            source_name,
            sink,
        )
    } else {
        parse_rows(reader, options, source_name, sink)
    }
}

/// The line loop: complete lines are parsed in place in the reader's own buffer (no copy);
/// only a line split across two reads is assembled in a small carry buffer.
fn parse_rows(
    mut reader: impl BufRead,
    options: &IngestOptions,
    source_name: &str,
    mut sink: impl FnMut(Row) -> Result<(), IngestError>,
) -> Result<(), IngestError> {
    let mut lines = LineHandler {
        parser: RowParser {
            options,
            source_name,
            dates: DateCache::default(),
        },
        line_number: 0,
        columns: None,
    };
    // The start of a line whose end has not been read yet.
    let mut carry: Vec<u8> = Vec::new();
    loop {
        let chunk = match reader.fill_buf() {
            Ok(chunk) => chunk,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(error) => {
                return Err(IngestError::Io {
                    source_name: source_name.to_owned(),
                    error,
                });
            }
        };
        if chunk.is_empty() {
            break;
        }
        let len = chunk.len();
        let mut start = 0;
        if !carry.is_empty() {
            let Some(end) = find_newline(chunk) else {
                carry.extend_from_slice(chunk);
                reader.consume(len);
                continue;
            };
            carry.extend_from_slice(&chunk[..end]);
            lines.handle(&carry, &mut sink)?;
            carry.clear();
            start = end + 1;
        }
        while let Some(end) = find_newline(&chunk[start..]) {
            lines.handle(&chunk[start..start + end], &mut sink)?;
            start += end + 1;
        }
        carry.extend_from_slice(&chunk[start..]);
        reader.consume(len);
    }
    if !carry.is_empty() {
        lines.handle(&carry, &mut sink)?;
    }
    if lines.columns.is_none() {
        return Err(IngestError::Empty {
            source_name: source_name.to_owned(),
        });
    }
    Ok(())
}

/// Numbers the lines, reads the header, and parses every later non-blank line into a row.
struct LineHandler<'a> {
    parser: RowParser<'a>,
    line_number: u64,
    /// The header's column count, once the header is read.
    columns: Option<usize>,
}

impl LineHandler<'_> {
    /// Handles one line (without its `\n`).
    #[inline(always)]
    fn handle(
        &mut self,
        line: &[u8],
        sink: &mut impl FnMut(Row) -> Result<(), IngestError>,
    ) -> Result<(), IngestError> {
        self.line_number += 1;
        let line = line.strip_suffix(b"\r").unwrap_or(line);
        let blank = line.first().is_none_or(u8::is_ascii_whitespace)
            && line.iter().all(u8::is_ascii_whitespace);
        if blank {
            return Ok(());
        }
        match self.columns {
            None => self.columns = Some(self.parser.header(line, self.line_number)?),
            Some(columns) => sink(self.parser.row(line, self.line_number, columns)?)?,
        }
        Ok(())
    }
}

/// Finds the first `\n`, eight bytes at a time: a word XOR the pattern has a zero byte where
/// the newline is, and `(x - 0x01..) & !x & 0x80..` flags the lowest zero byte exactly (higher
/// flags may be false positives from the borrow, so the lowest set bit is the answer).
#[inline]
fn find_newline(bytes: &[u8]) -> Option<usize> {
    find_byte::<b'\n'>(bytes)
}

/// The first `BYTE` in `bytes`, eight bytes at a time (see [`find_newline`]).
#[inline]
fn find_byte<const BYTE: u8>(bytes: &[u8]) -> Option<usize> {
    const LOW: u64 = 0x0101_0101_0101_0101;
    const HIGH: u64 = 0x8080_8080_8080_8080;
    let pattern: u64 = LOW * u64::from(BYTE);
    let mut chunks = bytes.chunks_exact(8);
    let mut offset = 0;
    for chunk in &mut chunks {
        let word = u64::from_le_bytes(chunk.try_into().expect("chunks_exact yields 8 bytes"));
        let x = word ^ pattern;
        let found = x.wrapping_sub(LOW) & !x & HIGH;
        if found != 0 {
            return Some(offset + (found.trailing_zeros() / 8) as usize);
        }
        offset += 8;
    }
    chunks
        .remainder()
        .iter()
        .position(|&b| b == BYTE)
        .map(|p| offset + p)
}

/// The last `YYYY-MM-DD` prefix seen and its day count, so consecutive rows of the same day
/// skip the calendar arithmetic.
#[derive(Debug, Default)]
struct DateCache {
    /// Bytes 0..8 and 8..10 of the prefix, compared as integers.
    prefix: (u64, u16),
    days: i64,
    valid: bool,
}

/// The first ten bytes as (u64, u16); the caller ensures at least ten bytes.
#[inline(always)]
fn date_key(b: &[u8]) -> (u64, u16) {
    let head: [u8; 8] = b[..8].try_into().expect("at least ten bytes");
    let tail: [u8; 2] = b[8..10].try_into().expect("at least ten bytes");
    (u64::from_le_bytes(head), u16::from_le_bytes(tail))
}

struct RowParser<'a> {
    options: &'a IngestOptions,
    source_name: &'a str,
    dates: DateCache,
}

impl RowParser<'_> {
    /// Checks the header and returns its number of columns (2 or 3).
    fn header(&self, line: &[u8], line_number: u64) -> Result<usize, IngestError> {
        let line = line.strip_prefix("\u{feff}".as_bytes()).unwrap_or(line);
        let names: Vec<String> = line
            .split(|&b| b == b',')
            .map(|f| String::from_utf8_lossy(unquote(f)).to_ascii_lowercase())
            .collect();
        match names.iter().map(String::as_str).collect::<Vec<_>>()[..] {
            ["time", "level"] => Ok(2),
            ["time", "level", "flag"] => Ok(3),
            _ => Err(IngestError::BadHeader {
                source_name: self.source_name.to_owned(),
                line: line_number,
                found: crate::drivers::clip_echo(&String::from_utf8_lossy(line)),
            }),
        }
    }

    fn malformed(
        &self,
        line: u64,
        field: &'static str,
        expected: &'static str,
        text: &[u8],
    ) -> IngestError {
        IngestError::Malformed {
            source_name: self.source_name.to_owned(),
            line,
            field,
            expected,
            text: crate::drivers::clip_echo(&String::from_utf8_lossy(text)),
        }
    }

    #[inline(always)]
    fn row(&mut self, line: &[u8], line_number: u64, columns: usize) -> Result<Row, IngestError> {
        let Some(comma) = find_byte::<b','>(line) else {
            return Err(self.malformed(
                line_number,
                "row",
                "fields `time,level` separated by a comma",
                line,
            ));
        };
        let time_field = unquote(&line[..comma]);
        let rest = &line[comma + 1..];
        let level_field = match find_byte::<b','>(rest) {
            Some(second) if columns == 3 && !rest[second + 1..].contains(&b',') => &rest[..second],
            Some(_) => {
                let expected = if columns == 3 {
                    "3 fields `time,level,flag`"
                } else {
                    "2 fields `time,level`"
                };
                return Err(self.malformed(line_number, "row", expected, line));
            }
            None => rest,
        };
        let time = parse_time_cached(time_field, &mut self.dates).ok_or_else(|| {
            self.malformed(
                line_number,
                "time",
                "an ISO 8601 time with Z or an offset, e.g. 2026-01-05T13:00:00Z",
                time_field,
            )
        })?;
        if !(EARLIEST_TIME..LATEST_TIME).contains(&time) {
            return Err(self.malformed(
                line_number,
                "time",
                "a time in the years 1800 to 2200",
                time_field,
            ));
        }
        let level_field = unquote(level_field);
        let level_m = match parse_level(level_field) {
            Level::Missing => None,
            Level::Value(v) if self.options.missing_sentinel == Some(v) => None,
            Level::Value(v)
                if !(-MAX_LEVEL_M..=MAX_LEVEL_M)
                    .contains(&(v * self.options.units.to_metres())) =>
            {
                return Err(self.malformed(
                    line_number,
                    "level",
                    "a level within +/-100 m of the datum",
                    level_field,
                ));
            }
            Level::Value(v) => Some(v * self.options.units.to_metres()),
            Level::Bad => {
                return Err(self.malformed(
                    line_number,
                    "level",
                    "a finite number, empty or NaN",
                    level_field,
                ));
            }
        };
        Ok(Row {
            line: line_number,
            time,
            level_m,
        })
    }
}

/// Trims ASCII spaces and one pair of surrounding double quotes.
#[inline]
fn unquote(field: &[u8]) -> &[u8] {
    let field = field.trim_ascii();
    field
        .strip_prefix(b"\"")
        .and_then(|f| f.strip_suffix(b"\""))
        .map_or(field, <[u8]>::trim_ascii)
}

enum Level {
    Missing,
    Value(f64),
    Bad,
}

/// Reads a level: empty or `NaN` (any case) is missing; otherwise a finite number.
#[inline(always)]
fn parse_level(field: &[u8]) -> Level {
    if field.is_empty() || field.eq_ignore_ascii_case(b"nan") {
        return Level::Missing;
    }
    if let Some(v) = parse_decimal_fast(field) {
        return Level::Value(v);
    }
    match std::str::from_utf8(field)
        .ok()
        .and_then(|s| s.parse::<f64>().ok())
    {
        Some(v) if v.is_finite() => Level::Value(v),
        Some(v) if v.is_nan() => Level::Missing,
        _ => Level::Bad,
    }
}

/// Exact fast path for plain decimals `[-+]digits[.digits]` with at most 15 significant
/// digits: the digits form an integer below 2^53 and the scale a power of ten below 10^23,
/// both exact in f64, so one division is correctly rounded (Clinger 1990, "How to read
/// floating point numbers accurately"). Anything else returns `None` for the general parser.
#[inline]
fn parse_decimal_fast(field: &[u8]) -> Option<f64> {
    const POWERS: [f64; 16] = [
        1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
    ];
    let (negative, digits) = match field.first()? {
        b'-' => (true, &field[1..]),
        b'+' => (false, &field[1..]),
        _ => (false, field),
    };
    let digit = |i: usize| digits.get(i).filter(|b| b.is_ascii_digit());
    // Wrapping arithmetic: a mantissa of more than 15 digits is thrown away below anyway.
    let mut mantissa: u64 = 0;
    let mut i = 0;
    while let Some(&b) = digit(i) {
        mantissa = mantissa.wrapping_mul(10).wrapping_add(u64::from(b - b'0'));
        i += 1;
    }
    let integer_digits = i;
    let mut fraction_digits = 0;
    if digits.get(i) == Some(&b'.') {
        i += 1;
        while let Some(&b) = digit(i) {
            mantissa = mantissa.wrapping_mul(10).wrapping_add(u64::from(b - b'0'));
            i += 1;
            fraction_digits += 1;
        }
    }
    let total = integer_digits + fraction_digits;
    if i != digits.len() || total == 0 || total > 15 {
        return None;
    }
    let value = mantissa as f64 / POWERS[fraction_digits];
    Some(if negative { -value } else { value })
}

/// Reads an ISO 8601 time with `Z` or an offset as Unix seconds (fractions rounded to the
/// nearest second). The common shapes `YYYY-MM-DDTHH:MM[:SS](Z|±HH:MM|±HHMM|±HH)` are
/// computed directly; anything else goes to chrono's RFC 3339 parser.
pub fn parse_time(field: &[u8]) -> Option<i64> {
    parse_time_cached(field, &mut DateCache::default())
}

#[inline]
fn parse_time_cached(field: &[u8], dates: &mut DateCache) -> Option<i64> {
    parse_time_fast(field, dates).or_else(|| {
        let text = std::str::from_utf8(field).ok()?;
        let t = DateTime::parse_from_rfc3339(text).ok()?;
        let round_up = t.timestamp_subsec_nanos() >= 500_000_000;
        Some(t.timestamp() + i64::from(round_up))
    })
}

#[inline(always)]
fn digits2(b: &[u8], at: usize) -> Option<u32> {
    let (h, l) = (*b.get(at)?, *b.get(at + 1)?);
    (h.is_ascii_digit() && l.is_ascii_digit())
        .then(|| u32::from(h - b'0') * 10 + u32::from(l - b'0'))
}

#[inline]
fn parse_time_fast(b: &[u8], dates: &mut DateCache) -> Option<i64> {
    if b.len() < 17 || !matches!(b[10], b'T' | b't' | b' ') || b[13] != b':' {
        return None;
    }
    let key = date_key(b);
    let days = if dates.valid && key == dates.prefix {
        dates.days
    } else {
        if b[4] != b'-' || b[7] != b'-' {
            return None;
        }
        let year = digits2(b, 0)? * 100 + digits2(b, 2)?;
        let (month, day) = (digits2(b, 5)?, digits2(b, 8)?);
        if !(1..=12).contains(&month) || day < 1 || day > days_in_month(year as i32, month) {
            return None;
        }
        let days = days_from_civil(year as i32, month, day);
        dates.prefix = key;
        dates.days = days;
        dates.valid = true;
        days
    };
    let (hour, minute) = (digits2(b, 11)?, digits2(b, 14)?);
    let (second, zone) = if b[16] == b':' {
        (digits2(b, 17)?, &b[19..])
    } else {
        (0, &b[16..])
    };
    if hour > 23 || minute > 59 || second > 59 {
        return None;
    }
    let offset_s = match zone {
        [b'Z' | b'z'] => 0,
        [sign @ (b'+' | b'-'), ..] => {
            let hours = digits2(zone, 1)?;
            let minutes = match zone.len() {
                3 => 0,
                5 => digits2(zone, 3)?,
                6 if zone[3] == b':' => digits2(zone, 4)?,
                _ => return None,
            };
            if hours > 23 || minutes > 59 {
                return None;
            }
            let s = i64::from(hours * 3600 + minutes * 60);
            if *sign == b'-' { -s } else { s }
        }
        _ => return None,
    };
    Some(days * SECONDS_PER_DAY + i64::from(hour * 3600 + minute * 60 + second) - offset_s)
}

fn is_leap(year: i32) -> bool {
    (year % 4 == 0 && year % 100 != 0) || year % 400 == 0
}

fn days_in_month(year: i32, month: u32) -> u32 {
    match month {
        2 if is_leap(year) => 29,
        2 => 28,
        4 | 6 | 9 | 11 => 30,
        _ => 31,
    }
}

/// Days since 1970-01-01 of a proleptic Gregorian date (H. Hinnant, "chrono-Compatible
/// Low-Level Date Algorithms", `days_from_civil`).
pub(crate) fn days_from_civil(year: i32, month: u32, day: u32) -> i64 {
    let y = i64::from(year) - i64::from(month <= 2);
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let m = i64::from(month);
    let doy = (153 * (if m > 2 { m - 3 } else { m + 9 }) + 2) / 5 + i64::from(day) - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

#[cfg(test)]
mod tests {
    use std::io::Write;

    use chrono::NaiveDate;

    use super::*;

    fn opts() -> IngestOptions {
        IngestOptions::default()
    }

    fn read(text: &str, options: &IngestOptions) -> Result<LevelSeries, IngestError> {
        read_levels(text.as_bytes(), options, "test.csv")
    }

    fn gzip(text: &str) -> Vec<u8> {
        let mut enc = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::default());
        enc.write_all(text.as_bytes()).unwrap();
        enc.finish().unwrap()
    }

    // Reference: chrono's own RFC 3339 parser, a general-purpose library.
    #[test]
    fn fast_time_path_agrees_with_chrono() {
        let cases = [
            "2026-01-05T13:00:00Z",
            "2026-01-05T08:00:00-05:00",
            "1970-01-01T00:00:00Z",
            "1969-12-31T23:59:59Z",
            "2000-02-29T12:34:56+05:30",
            "1900-03-01T00:00:00Z",
            "2100-12-31T23:59:59-12:00",
            "1985-07-04 06:06:00+01:00",
        ];
        for case in cases {
            let expected = DateTime::parse_from_rfc3339(case).unwrap().timestamp();
            assert_eq!(
                parse_time_fast(case.as_bytes(), &mut DateCache::default()),
                Some(expected),
                "{case}"
            );
        }
        // Shapes outside RFC 3339 that the fast path reads.
        let t = parse_time(b"2026-01-05T08:00-0500").unwrap();
        assert_eq!(
            t,
            DateTime::parse_from_rfc3339("2026-01-05T13:00:00Z")
                .unwrap()
                .timestamp()
        );
        assert_eq!(parse_time(b"2026-01-05T13:00+00"), Some(t));
        // Fractions go through chrono and round to the nearest second.
        assert_eq!(parse_time(b"2026-01-05T12:59:59.6Z"), Some(t));
    }

    #[test]
    fn newline_finder_agrees_with_a_byte_scan() {
        let text = b"abc\ndefghijklmnop\n\nqrstuvwxyz0123456789\xff\x8a\n\x0b";
        for start in 0..text.len() {
            let rest = &text[start..];
            assert_eq!(
                find_newline(rest),
                rest.iter().position(|&b| b == b'\n'),
                "{start}"
            );
        }
    }

    #[test]
    fn date_cache_does_not_leak_between_days() {
        let mut cache = DateCache::default();
        let a = parse_time_fast(b"2026-01-05T13:00:00Z", &mut cache).unwrap();
        let b = parse_time_fast(b"2026-01-05T14:00:00Z", &mut cache).unwrap();
        let c = parse_time_fast(b"2026-01-06T13:00:00Z", &mut cache).unwrap();
        assert_eq!((b - a, c - a), (3600, 86_400));
        // A bad date after a cached good one is still rejected.
        assert_eq!(parse_time_fast(b"2026-02-30T13:00:00Z", &mut cache), None);
        assert_eq!(parse_time_fast(b"2026-01-06X13:00:00Z", &mut cache), None);
    }

    #[test]
    fn times_without_zone_or_impossible_dates_are_rejected() {
        for bad in [
            "2026-01-05T13:00:00",
            "2026-02-29T00:00:00Z",
            "2026-13-01T00:00:00Z",
            "2026-01-05T24:00:00Z",
            "05/01/2026 13:00",
            "",
        ] {
            assert_eq!(parse_time(bad.as_bytes()), None, "{bad}");
        }
    }

    // Reference: Rust's standard library float parser (correctly rounded).
    #[test]
    fn fast_decimal_path_is_correctly_rounded() {
        for case in [
            "0.1",
            "-0.3048",
            "1.2345678901234",
            "123456789012345",
            "+7",
            "0.000001",
        ] {
            let expected: f64 = case.parse().unwrap();
            assert_eq!(
                parse_decimal_fast(case.as_bytes()),
                Some(expected),
                "{case}"
            );
        }
        assert_eq!(parse_decimal_fast(b"1e3"), None);
        assert_eq!(parse_decimal_fast(b"1234567890123456"), None);
        assert_eq!(parse_decimal_fast(b"."), None);
    }

    proptest::proptest! {
        // Reference: Rust's standard library parser, on random plain decimals.
        #[test]
        fn fast_decimal_path_matches_std_on_random_decimals(
            value in -1.0e6f64..1.0e6,
            places in 0usize..9,
        ) {
            let text = format!("{value:.places$}");
            let fast = parse_decimal_fast(text.as_bytes());
            proptest::prop_assert!(fast.is_some(), "{}", text);
            proptest::prop_assert_eq!(fast, text.parse::<f64>().ok(), "{}", text);
        }
    }

    // 1 ft = 0.3048 m exactly: international yard and pound agreement (1959).
    #[test]
    fn feet_convert_at_exactly_0_3048_metres() {
        let options = IngestOptions {
            units: LevelUnits::Feet,
            ..opts()
        };
        let s = read(
            "time,level\n2026-01-01T00:00:00Z,10\n2026-01-01T01:00:00Z,1.5\n",
            &options,
        )
        .unwrap();
        assert_eq!(s.levels_m, vec![3.048, 1.5 * 0.3048]);
    }

    #[test]
    fn empty_nan_and_sentinel_are_missing() {
        let options = IngestOptions {
            missing_sentinel: Some(-99999.0),
            ..opts()
        };
        let text = "time,level,flag\n\
                    2026-01-01T00:00:00Z,,\n\
                    2026-01-01T01:00:00Z,NaN,\n\
                    2026-01-01T02:00:00Z,nan,x\n\
                    2026-01-01T03:00:00Z,-99999.0,\n\
                    2026-01-01T04:00:00Z,-99999,\n\
                    2026-01-01T05:00:00Z,0.5,v\n";
        let s = read(text, &options).unwrap();
        assert_eq!(s.levels_m, vec![0.5]);
        assert_eq!(s.missing, 5);
    }

    #[test]
    fn gzip_is_detected_by_content() {
        let text = "time,level\n2026-01-01T00:00:00Z,0.25\n";
        let s = read_levels(&gzip(text)[..], &opts(), "levels.csv").unwrap();
        assert_eq!(s.levels_m, vec![0.25]);
        // A gzip-looking name with plain content still reads as plain.
        let s = read_levels(text.as_bytes(), &opts(), "levels.csv.gz").unwrap();
        assert_eq!(s.levels_m, vec![0.25]);
    }

    #[test]
    fn unsorted_rows_are_sorted() {
        let text = "time,level\n\
                    2026-01-01T02:00:00Z,2\n\
                    2026-01-01T00:00:00Z,0\n\
                    2026-01-01T01:00:00Z,1\n";
        let s = read(text, &opts()).unwrap();
        assert_eq!(s.levels_m, vec![0.0, 1.0, 2.0]);
        assert!(s.times.windows(2).all(|w| w[0] < w[1]));
    }

    #[test]
    fn duplicate_times_name_both_lines() {
        // The same instant written in two offsets, out of order.
        let text = "time,level\n\
                    2026-01-01T05:00:00Z,1\n\
                    2026-01-01T06:00:00Z,1\n\
                    2026-01-01T00:00:00-05:00,2\n";
        let err = read(text, &opts()).unwrap_err();
        assert!(
            matches!(
                err,
                IngestError::Duplicate {
                    first_line: 2,
                    second_line: 4,
                    ..
                }
            ),
            "{err}"
        );
        let err = summarize(text.as_bytes(), &opts(), "test.csv").unwrap_err();
        assert_eq!(
            err.to_string(),
            "test.csv: lines 2 and 4: duplicate time 2026-01-01T05:00:00Z"
        );
        // Adjacent duplicates in sorted input.
        let text = "time,level\n2026-01-01T05:00:00Z,1\n2026-01-01T05:00:00Z,1\n";
        let err = summarize(text.as_bytes(), &opts(), "test.csv").unwrap_err();
        assert!(matches!(
            err,
            IngestError::Duplicate {
                first_line: 2,
                second_line: 3,
                ..
            }
        ));
    }

    #[test]
    fn summarize_finds_duplicates_against_a_regular_prefix() {
        let mut text = String::from("time,level\n");
        for h in 0..48 {
            text.push_str(&format!(
                "2026-01-{:02}T{:02}:00:00Z,1\n",
                1 + h / 24,
                h % 24
            ));
        }
        text.push_str("2026-01-01T13:00:00Z,2\n"); // line 2 + 13 = 15 holds 13:00
        let err = summarize(text.as_bytes(), &opts(), "t.csv").unwrap_err();
        assert!(
            matches!(
                err,
                IngestError::Duplicate {
                    first_line: 15,
                    second_line: 50,
                    ..
                }
            ),
            "{err}"
        );
    }

    #[test]
    fn malformed_rows_name_file_line_and_field() {
        let cases = [
            (
                "time,level\n2026-01-01T00:00:00Z,0.1\nyesterday,0.2\n",
                "field `time`",
                "line 3",
            ),
            (
                "time,level\n\n2026-01-01T00:00:00Z,high\n",
                "field `level`",
                "line 3",
            ),
            (
                "time,level\n2026-01-01T00:00:00Z,inf\n",
                "field `level`",
                "line 2",
            ),
            (
                "time,level\n2026-01-01T00:00:00Z\n",
                "field `row`",
                "line 2",
            ),
            (
                "time,level\n2026-01-01T00:00:00Z,1,2\n",
                "field `row`",
                "line 2",
            ),
        ];
        for (text, field, line) in cases {
            let err = read(text, &opts()).unwrap_err().to_string();
            assert!(err.starts_with("test.csv: "), "{err}");
            assert!(err.contains(field) && err.contains(line), "{err}");
        }
        let err = read("when,height\n", &opts()).unwrap_err();
        assert!(matches!(err, IngestError::BadHeader { line: 1, .. }));
        assert!(matches!(
            read("", &opts()).unwrap_err(),
            IngestError::Empty { .. }
        ));
    }

    #[test]
    fn lines_split_across_reads_parse_as_whole_lines() {
        // The loop parses lines in the reader's buffer and assembles a line cut by a read
        // boundary in a carry buffer; every buffer size, down to one byte, must read the same
        // rows and name the same line in an error as one read of the whole text.
        let text = "\u{feff}time,level\r\n2026-01-01T00:00:00Z,0.512\r\n\n\
                    2026-01-01T01:00:00Z,\n2026-01-01T07:00:00+05:00,-1.25\n\
                    2026-01-01T03:00:00Z,NaN\n2026-01-01T04:00:00Z,0.75";
        let whole = read(text, &opts()).unwrap();
        assert_eq!(whole.levels_m, vec![0.512, -1.25, 0.75]);
        let bad = "time,level\n2026-01-01T00:00:00Z,0.5\n\n2026-01-01T01:00:00Z,x1\n";
        let whole_error = read(bad, &opts()).unwrap_err().to_string();
        assert!(whole_error.contains("line 4"), "{whole_error}");
        for capacity in 1..=text.len() + 1 {
            let reader = std::io::BufReader::with_capacity(capacity, text.as_bytes());
            let split = read_levels(reader, &opts(), "test.csv").unwrap();
            assert_eq!(split, whole, "buffer of {capacity} bytes");
            let reader = std::io::BufReader::with_capacity(capacity, bad.as_bytes());
            let error = read_levels(reader, &opts(), "test.csv").unwrap_err();
            assert_eq!(error.to_string(), whole_error, "buffer of {capacity} bytes");
        }
    }

    #[test]
    fn crlf_bom_and_quotes_are_tolerated() {
        let text = "\u{feff}\"time\",\"level\"\r\n\"2026-01-01T00:00:00Z\",\"0.5\"\r\n";
        assert_eq!(read(text, &opts()).unwrap().levels_m, vec![0.5]);
    }

    #[test]
    fn summary_keeps_interval_and_monthly_means() {
        let mut text = String::from("time,level\n");
        // 31 January 22:00 .. 1 February 01:00 UTC, half-hourly.
        let start = DateTime::parse_from_rfc3339("2026-01-31T22:00:00Z")
            .unwrap()
            .timestamp();
        for i in 0..7 {
            let t = DateTime::from_timestamp(start + i * 1800, 0).unwrap();
            text.push_str(&format!("{},{}\n", t.to_rfc3339(), i));
        }
        let s = summarize(text.as_bytes(), &opts(), "t.csv").unwrap();
        assert_eq!(s.sampling_interval_s, Some(1800));
        assert_eq!((s.rows, s.readings, s.missing), (7, 7, 0));
        let jan = &s.monthly[0];
        assert_eq!((jan.year, jan.month, jan.readings), (2026, 1, 4));
        assert!((jan.mean_m - 1.5).abs() < 1e-12);
        let feb = &s.monthly[1];
        assert_eq!((feb.year, feb.month, feb.readings), (2026, 2, 3));
        assert!((feb.mean_m - 5.0).abs() < 1e-12);
    }

    // Reference: chrono's calendar (NaiveDate::signed_duration_since the Unix epoch).
    #[test]
    fn time_limits_are_1800_and_2201() {
        let at = |s: &str| DateTime::parse_from_rfc3339(s).unwrap().timestamp();
        assert_eq!(EARLIEST_TIME, at("1800-01-01T00:00:00Z"));
        assert_eq!(LATEST_TIME, at("2201-01-01T00:00:00Z"));
        let err = read("time,level\n2926-01-01T00:00:00Z,1\n", &opts()).unwrap_err();
        assert!(err.to_string().contains("years 1800 to 2200"), "{err}");
    }

    #[test]
    fn days_from_civil_matches_chrono() {
        let epoch = NaiveDate::from_ymd_opt(1970, 1, 1).unwrap();
        let mut d = NaiveDate::from_ymd_opt(1799, 12, 25).unwrap();
        while d < NaiveDate::from_ymd_opt(2201, 1, 10).unwrap() {
            use chrono::Datelike;
            assert_eq!(
                days_from_civil(d.year(), d.month(), d.day()),
                (d - epoch).num_days(),
                "{d}"
            );
            d += chrono::Duration::days(13);
        }
    }

    #[test]
    fn one_decoding_gives_the_series_and_the_summary() {
        // Out of order, with a missing level and a sentinel, gzip: the combined pass must
        // agree with the two separate ones.
        let text = "time,level\n2026-01-01T02:00:00Z,0.3\n2026-01-01T00:00:00Z,0.1\n\
                    2026-01-01T01:00:00Z,\n2026-01-01T03:00:00Z,-99\n2026-01-02T00:00:00Z,0.5\n";
        let options = IngestOptions {
            missing_sentinel: Some(-99.0),
            ..opts()
        };
        for bytes in [text.as_bytes().to_vec(), gzip(text)] {
            let (series, summary) = decode_levels(bytes.as_slice(), &options, "t.csv").unwrap();
            assert_eq!(
                series,
                read_levels(bytes.as_slice(), &options, "t.csv").unwrap()
            );
            assert_eq!(
                summary,
                summarize(bytes.as_slice(), &options, "t.csv").unwrap()
            );
            assert_eq!(series.times.len(), 3);
            assert!(!summary.was_sorted);
        }
        let dup = "time,level\n2026-01-01T00:00:00Z,1\n2026-01-01T00:00:00Z,2\n";
        let err = decode_levels(dup.as_bytes(), &opts(), "t.csv").unwrap_err();
        assert!(err.to_string().contains("t.csv"), "{err}");
    }
}
