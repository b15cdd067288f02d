//! Tidal datums from a water-level record: MHHW, MHW, DTL, MTL, MSL, MLW, MLLW and the ranges
//! GT (great diurnal range) and MN (mean range), after NOAA NOS CO-OPS 1 (2000), *Tidal
//! Datums and Their Applications*, and NOS CO-OPS 2 (2003), *Computational Techniques for
//! Tidal Datums Handbook*.
//!
//! High and low waters are the turning points of the record at least `min_separation_hours`
//! apart and at least `min_range` high (the handbook's 2 hours and 0.1 ft / 0.03 m), refined by
//! a parabola through the three readings about each turning point. Each tidal day (24.84 h)
//! with complete readings contributes its highest high and lowest low to MHHW and MLLW; all
//! its highs and lows go to MHW and MLW. A record covering the 1983-2001 National Tidal Datum
//! Epoch is reduced to that epoch; a shorter record gives datums of its own period, which
//! [`Datums::adjust_modified_range_ratio`] brings to the epoch through a control gauge.

use serde::Serialize;

use super::{HOUR, TideError, check_series};

/// Length of the tidal (lunar) day in hours.
pub const TIDAL_DAY_HOURS: f64 = 24.8412;
/// The National Tidal Datum Epoch 1983-2001 as unix seconds: 1983-01-01T00:00Z ..
/// 2002-01-01T00:00Z (exclusive).
pub const NTDE_1983_2001: (i64, i64) = (410_227_200, 1_009_843_200);

/// Unchecked settings of the datum computation.
#[derive(Debug, Clone, PartialEq)]
pub struct DatumsParams {
    /// Least time between a high and the next low, hours (handbook: 2).
    pub min_separation_hours: f64,
    /// Least rise or fall between a high and a low, units of the levels (0.03 m ~ 0.1 ft).
    pub min_range: f64,
    /// Share of a tidal day's expected readings needed for it to count.
    pub min_day_completeness: f64,
}

impl Default for DatumsParams {
    fn default() -> Self {
        Self {
            min_separation_hours: 2.0,
            min_range: 0.03,
            min_day_completeness: 0.9,
        }
    }
}

impl DatumsParams {
    /// Validates the settings.
    pub fn check(&self) -> Result<DatumsConfig, TideError> {
        if !(self.min_separation_hours > 0.0 && self.min_separation_hours < 12.0) {
            return Err(TideError::BadParameter {
                name: "min_separation_hours",
                value: self.min_separation_hours,
                expected: "0 < hours < 12",
            });
        }
        if !(self.min_range >= 0.0 && self.min_range.is_finite()) {
            return Err(TideError::BadParameter {
                name: "min_range",
                value: self.min_range,
                expected: "a finite number >= 0",
            });
        }
        if !(self.min_day_completeness > 0.0 && self.min_day_completeness <= 1.0) {
            return Err(TideError::BadParameter {
                name: "min_day_completeness",
                value: self.min_day_completeness,
                expected: "0 < share <= 1",
            });
        }
        Ok(DatumsConfig(self.clone()))
    }
}

/// Validated datum settings.
#[derive(Debug, Clone, PartialEq)]
pub struct DatumsConfig(DatumsParams);

/// High or low water.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Extreme {
    /// A high water.
    High,
    /// A low water.
    Low,
}

/// One high or low water.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct HighLow {
    /// Time of the turning point, unix seconds (refined between readings).
    pub time: i64,
    /// Its level.
    pub level: f64,
    /// High or low.
    pub kind: Extreme,
}

/// The period the datums refer to.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Epoch {
    /// The 1983-2001 National Tidal Datum Epoch, from a record covering it.
    Ntde1983To2001,
    /// The record's own period (first and last reading used, unix seconds).
    RecordPeriod {
        /// First reading.
        first: i64,
        /// Last reading.
        last: i64,
    },
    /// The record's period brought to the control gauge's epoch by the modified range ratio
    /// method (NOS CO-OPS 2, 2003).
    ModifiedRangeRatio {
        /// First reading of the short record.
        first: i64,
        /// Last reading of the short record.
        last: i64,
    },
}

impl Epoch {
    /// The epoch in words.
    pub fn describe(&self) -> String {
        match self {
            Epoch::Ntde1983To2001 => "1983-2001 National Tidal Datum Epoch".to_owned(),
            Epoch::RecordPeriod { .. } => {
                "the record's own period (not the 1983-2001 National Tidal Datum Epoch: \
                 the record does not cover it and no control gauge was given)"
                    .to_owned()
            }
            Epoch::ModifiedRangeRatio { .. } => "1983-2001 National Tidal Datum Epoch, by \
                 the modified range ratio method against a control gauge"
                .to_owned(),
        }
    }
}

/// Tidal datums in the units and datum of the levels.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Datums {
    /// Mean higher high water.
    pub mhhw: f64,
    /// Mean high water.
    pub mhw: f64,
    /// Diurnal tide level, (MHHW + MLLW) / 2.
    pub dtl: f64,
    /// Mean tide level, (MHW + MLW) / 2.
    pub mtl: f64,
    /// Mean sea level.
    pub msl: f64,
    /// Mean low water.
    pub mlw: f64,
    /// Mean lower low water.
    pub mllw: f64,
    /// Great diurnal range, MHHW - MLLW.
    pub gt: f64,
    /// Mean range, MHW - MLW.
    pub mn: f64,
    /// Tidal days used.
    pub tidal_days: usize,
    /// High waters used.
    pub highs: usize,
    /// Low waters used.
    pub lows: usize,
    /// The period the datums refer to.
    pub epoch: Epoch,
}

impl DatumsConfig {
    /// The high and low waters of a record (NaN = missing), in time order, alternating.
    pub fn high_low_waters(
        &self,
        times: &[i64],
        levels: &[f64],
    ) -> Result<Vec<HighLow>, TideError> {
        check_series(times, levels)?;
        let half_window = (self.0.min_separation_hours * HOUR) as i64;
        let mut raw: Vec<(usize, Extreme)> = Vec::new();
        for i in 1..times.len().saturating_sub(1) {
            let y = levels[i];
            if !(y.is_finite() && levels[i - 1].is_finite() && levels[i + 1].is_finite()) {
                continue;
            }
            let (mut is_max, mut is_min) = (true, true);
            let mut j = i;
            while j > 0 && times[i] - times[j - 1] <= half_window {
                j -= 1;
                let x = levels[j];
                // Ties go to the earliest reading of a flat top or bottom.
                if x >= y {
                    is_max = false;
                }
                if x <= y {
                    is_min = false;
                }
            }
            let mut j = i;
            while j + 1 < times.len() && times[j + 1] - times[i] <= half_window {
                j += 1;
                let x = levels[j];
                if x > y {
                    is_max = false;
                }
                if x < y {
                    is_min = false;
                }
            }
            if is_max {
                raw.push((i, Extreme::High));
            } else if is_min {
                raw.push((i, Extreme::Low));
            }
        }
        let mut seq = alternate(&raw, levels);
        // Drop high-low pairs smaller than the minimum range, then re-alternate.
        loop {
            let small = seq
                .windows(2)
                .position(|w| (levels[w[0].0] - levels[w[1].0]).abs() < self.0.min_range);
            let Some(k) = small else { break };
            seq.drain(k..k + 2);
            seq = alternate(&seq, levels);
        }
        Ok(seq
            .into_iter()
            .map(|(i, kind)| refine(times, levels, i, kind))
            .collect())
    }

    /// Datums of a record (NaN = missing). A record covering 1983-2001 is reduced to it.
    pub fn compute(&self, times: &[i64], levels: &[f64]) -> Result<Datums, TideError> {
        check_series(times, levels)?;
        let present: Vec<usize> = (0..times.len())
            .filter(|&i| levels[i].is_finite())
            .collect();
        let (Some(&a), Some(&b)) = (present.first(), present.last()) else {
            return Err(TideError::TooFewTides {
                found: 0,
                needed: 4,
            });
        };
        let covers_ntde = times[a] <= NTDE_1983_2001.0 && times[b] >= NTDE_1983_2001.1 - 3600;
        let (times, levels, epoch) = if covers_ntde {
            let lo = times.partition_point(|&t| t < NTDE_1983_2001.0);
            let hi = times.partition_point(|&t| t < NTDE_1983_2001.1);
            (&times[lo..hi], &levels[lo..hi], Epoch::Ntde1983To2001)
        } else {
            (
                times,
                levels,
                Epoch::RecordPeriod {
                    first: times[a],
                    last: times[b],
                },
            )
        };
        let extremes = self.high_low_waters(times, levels)?;
        if extremes.len() < 4 {
            return Err(TideError::TooFewTides {
                found: extremes.len(),
                needed: 4,
            });
        }
        let step = dominant_step(times, levels);
        let day_seconds = TIDAL_DAY_HOURS * HOUR;
        let origin = times[0];
        let day_of = |t: i64| ((t - origin) as f64 / day_seconds).floor() as i64;
        let n_days = (day_of(*times.last().unwrap_or(&origin)) + 1).max(1) as usize;
        let mut readings = vec![0usize; n_days];
        let mut sum = 0.0;
        let mut count = 0usize;
        for (&t, &y) in times.iter().zip(levels) {
            if y.is_finite() {
                readings[day_of(t) as usize] += 1;
                sum += y;
                count += 1;
            }
        }
        let expected = day_seconds / step as f64;
        let complete: Vec<bool> = readings
            .iter()
            .map(|&r| r as f64 >= self.0.min_day_completeness * expected.floor())
            .collect();
        let mut hh: Vec<Option<f64>> = vec![None; n_days];
        let mut ll: Vec<Option<f64>> = vec![None; n_days];
        let (mut highs, mut lows) = (Vec::new(), Vec::new());
        for e in &extremes {
            let d = day_of(e.time).clamp(0, n_days as i64 - 1) as usize;
            if !complete[d] {
                continue;
            }
            match e.kind {
                Extreme::High => {
                    highs.push(e.level);
                    hh[d] = Some(hh[d].map_or(e.level, |h| h.max(e.level)));
                }
                Extreme::Low => {
                    lows.push(e.level);
                    ll[d] = Some(ll[d].map_or(e.level, |l| l.min(e.level)));
                }
            }
        }
        let days = (0..n_days)
            .filter(|&d| hh[d].is_some() && ll[d].is_some())
            .count();
        let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
        let hh: Vec<f64> = hh.into_iter().flatten().collect();
        let ll: Vec<f64> = ll.into_iter().flatten().collect();
        if highs.len() < 2 || lows.len() < 2 {
            return Err(TideError::TooFewTides {
                found: highs.len() + lows.len(),
                needed: 4,
            });
        }
        let (mhhw, mhw, mlw, mllw) = (mean(&hh), mean(&highs), mean(&lows), mean(&ll));
        Ok(Datums {
            mhhw,
            mhw,
            dtl: 0.5 * (mhhw + mllw),
            mtl: 0.5 * (mhw + mlw),
            msl: sum / count as f64,
            mlw,
            mllw,
            gt: mhhw - mllw,
            mn: mhw - mlw,
            tidal_days: days,
            highs: highs.len(),
            lows: lows.len(),
            epoch,
        })
    }
}

impl Datums {
    /// Brings datums of a short record to the epoch of a control gauge by the modified range
    /// ratio method (NOS CO-OPS 2, 2003): `control_concurrent` are the control's datums over
    /// the same period as `self`, `control_epoch` its accepted epoch datums.
    ///
    /// MTL, DTL and MSL move by the control's difference; MN and GT scale by the control's
    /// ratio; MLW = MTL - MN/2, MHW = MLW + MN, MLLW = DTL - GT/2, MHHW = MLLW + GT.
    pub fn adjust_modified_range_ratio(
        &self,
        control_concurrent: &Datums,
        control_epoch: &Datums,
    ) -> Result<Datums, TideError> {
        for (name, value) in [
            ("control MN", control_concurrent.mn),
            ("control GT", control_concurrent.gt),
        ] {
            if value.is_nan() || value <= 0.0 {
                return Err(TideError::BadParameter {
                    name: if name == "control MN" {
                        "control_concurrent.mn"
                    } else {
                        "control_concurrent.gt"
                    },
                    value,
                    expected: "a positive range",
                });
            }
        }
        let mtl = self.mtl + (control_epoch.mtl - control_concurrent.mtl);
        let dtl = self.dtl + (control_epoch.dtl - control_concurrent.dtl);
        let msl = self.msl + (control_epoch.msl - control_concurrent.msl);
        let mn = self.mn * control_epoch.mn / control_concurrent.mn;
        let gt = self.gt * control_epoch.gt / control_concurrent.gt;
        let mlw = mtl - 0.5 * mn;
        let mllw = dtl - 0.5 * gt;
        let (first, last) = match self.epoch {
            Epoch::RecordPeriod { first, last } | Epoch::ModifiedRangeRatio { first, last } => {
                (first, last)
            }
            Epoch::Ntde1983To2001 => NTDE_1983_2001,
        };
        Ok(Datums {
            mhhw: mllw + gt,
            mhw: mlw + mn,
            dtl,
            mtl,
            msl,
            mlw,
            mllw,
            gt,
            mn,
            epoch: Epoch::ModifiedRangeRatio { first, last },
            ..self.clone()
        })
    }
}

/// Keeps one extreme per run of equal kind: the highest high or lowest low.
fn alternate(raw: &[(usize, Extreme)], levels: &[f64]) -> Vec<(usize, Extreme)> {
    let mut out: Vec<(usize, Extreme)> = Vec::with_capacity(raw.len());
    for &(i, kind) in raw {
        match out.last_mut() {
            Some(last) if last.1 == kind => {
                let better = match kind {
                    Extreme::High => levels[i] > levels[last.0],
                    Extreme::Low => levels[i] < levels[last.0],
                };
                if better {
                    *last = (i, kind);
                }
            }
            _ => out.push((i, kind)),
        }
    }
    out
}

/// Parabola through the readings about a turning point on an even step.
fn refine(times: &[i64], levels: &[f64], i: usize, kind: Extreme) -> HighLow {
    let plain = HighLow {
        time: times[i],
        level: levels[i],
        kind,
    };
    if i == 0 || i + 1 >= times.len() {
        return plain;
    }
    let step = times[i] - times[i - 1];
    if times[i + 1] - times[i] != step {
        return plain;
    }
    let (a, b, c) = (levels[i - 1], levels[i], levels[i + 1]);
    let curvature = a - 2.0 * b + c;
    if curvature.is_nan() || curvature == 0.0 {
        return plain;
    }
    let delta = (0.5 * (a - c) / curvature).clamp(-0.5, 0.5);
    HighLow {
        time: times[i] + (delta * step as f64).round() as i64,
        level: b - 0.25 * (a - c) * delta,
        kind,
    }
}

fn dominant_step(times: &[i64], levels: &[f64]) -> i64 {
    let mut counts = std::collections::BTreeMap::<i64, usize>::new();
    let mut prev: Option<i64> = None;
    for (&t, y) in times.iter().zip(levels).take(20_000) {
        if y.is_finite() {
            if let Some(p) = prev {
                *counts.entry(t - p).or_default() += 1;
            }
            prev = Some(t);
        }
    }
    counts
        .into_iter()
        .max_by(|a, b| a.1.cmp(&b.1).then(b.0.cmp(&a.0)))
        .map_or(3600, |(s, _)| s.max(1))
}
