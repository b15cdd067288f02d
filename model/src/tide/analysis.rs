//! Harmonic analysis of a water-level record by least squares.
//!
//! The model is `h(t) = mean + trend * (t - t0) + sum_k f_k(t) [a_k cos(V_k + u_k) +
//! b_k sin(V_k + u_k)]`, fitted by streaming its normal equations: the record is cut into
//! segments (30 days, or fewer steps for fine sampling) over which the nodal factors f, u are
//! held at their mid-segment values. Within a segment every regressor is a fixed linear
//! combination of `cos(w_k tau)`, `sin(w_k tau)` in the time `tau` since the segment's start,
//! so for samples on the record's regular grid the segment's Gram matrix is the Gram matrix of
//! one full segment (computed once) less the outer products of its missing slots, rotated
//! into the segment's phases. Memory is bounded by one segment's table, whatever the record's
//! length; off-grid samples are accumulated directly.
//!
//! Confidence intervals follow the linearized method of Pawlowicz, Beardsley & Lentz (2002):
//! the coefficient covariance `(X'X)^-1` is scaled by the residual's periodogram averaged over
//! the constituent's frequency band (so coloured, non-tidal noise widens the intervals of the
//! constituents it overlaps), then propagated to amplitude and phase.

use nalgebra::{DMatrix, DVector};

use super::astro::{Astro, NodalAngles};
use super::constituents::{self, Constituent};
use super::predict::{FitSummary, FittedConstituent, TideModel};
use super::{HOUR, HOURS_PER_YEAR, TideError, check_series};

/// Unchecked analysis settings.
#[derive(Debug, Clone, PartialEq)]
pub struct AnalysisParams {
    /// Rayleigh criterion factor (1 = constituents one cycle apart over the record).
    pub rayleigh: f64,
    /// Fit a linear trend along with the mean.
    pub trend: bool,
    /// Fit exactly these constituents instead of choosing by the Rayleigh criterion.
    pub constituents: Option<Vec<String>>,
}

impl Default for AnalysisParams {
    fn default() -> Self {
        Self {
            rayleigh: 1.0,
            trend: false,
            constituents: None,
        }
    }
}

impl AnalysisParams {
    /// Validates the settings.
    pub fn check(&self) -> Result<AnalysisConfig, TideError> {
        if !(self.rayleigh > 0.0 && self.rayleigh <= 10.0) {
            return Err(TideError::BadParameter {
                name: "rayleigh",
                value: self.rayleigh,
                expected: "0 < rayleigh <= 10",
            });
        }
        let names = match &self.constituents {
            None => None,
            Some(list) => {
                let mut chosen: Vec<&'static Constituent> = Vec::new();
                for name in list {
                    let c = constituents::by_name(name)
                        .ok_or_else(|| TideError::UnknownConstituent(name.clone()))?;
                    if chosen.iter().any(|k| k.name == c.name) {
                        return Err(TideError::DuplicateConstituent(name.clone()));
                    }
                    chosen.push(c);
                }
                Some(chosen)
            }
        };
        Ok(AnalysisConfig {
            rayleigh: self.rayleigh,
            trend: self.trend,
            constituents: names,
        })
    }
}

/// Validated analysis settings; only these can fit.
#[derive(Debug, Clone, PartialEq)]
pub struct AnalysisConfig {
    rayleigh: f64,
    trend: bool,
    constituents: Option<Vec<&'static Constituent>>,
}

/// Longest segment, and the cap on its number of slots.
const SEGMENT_SECONDS: i64 = 30 * 86_400;
const MAX_SLOTS: i64 = 8_640;
/// Test frequencies per band for the residual spectrum, and how many of the long-period
/// band's nearest ones each long-period constituent averages.
const BAND_TEST_FREQUENCIES: usize = 16;
const LONG_PERIOD_TEST_FREQUENCIES: usize = 32;
const LONG_PERIOD_NEAREST: usize = 8;
/// Two-sided 95% normal quantile.
const Z95: f64 = 1.959_963_984_540_054;

impl AnalysisConfig {
    /// The constituents this configuration fits to a record spanning `span_hours`.
    pub fn constituents_for(&self, span_hours: f64) -> Vec<&'static Constituent> {
        match &self.constituents {
            Some(list) => list.clone(),
            None => constituents::select_rayleigh(span_hours, self.rayleigh),
        }
    }

    /// Fits the model to `levels` (NaN = missing) at strictly increasing unix `times`.
    pub fn fit(&self, times: &[i64], levels: &[f64]) -> Result<TideModel, TideError> {
        check_series(times, levels)?;
        let present: Vec<usize> = (0..times.len())
            .filter(|&i| levels[i].is_finite())
            .collect();
        let (Some(&first_i), Some(&last_i)) = (present.first(), present.last()) else {
            return Err(TideError::TooFewSamples {
                samples: 0,
                parameters: 1,
            });
        };
        let (first, last) = (times[first_i], times[last_i]);
        let span_hours = (last - first) as f64 / HOUR;
        let cons = self.constituents_for(span_hours);
        if cons.is_empty() {
            return Err(TideError::NoConstituents { span_hours });
        }
        let layout = Layout::new(self.trend, cons.len());
        let p = layout.size();
        if present.len() <= p {
            return Err(TideError::TooFewSamples {
                samples: present.len(),
                parameters: p,
            });
        }
        let reference_time = first + (last - first) / 2;
        let step = dominant_step(times, &present);
        let slots = (SEGMENT_SECONDS / step).clamp(1, MAX_SLOTS);
        let segment = slots * step;
        let omega: Vec<f64> = cons
            .iter()
            .map(|c| c.speed_deg_per_hour().to_radians())
            .collect();
        let offset = provisional_mean(levels, &present);

        let basis = SegmentBasis::new(&layout, &omega, step, slots);
        let mut normal = vec![0.0; p * p];
        let mut rhs = vec![0.0; p];
        let mut sum_sq = 0.0;
        let mut sum_y = 0.0;
        let mut seg_gram = vec![0.0; p * p];
        let mut seg_rhs = vec![0.0; p];
        let mut z = vec![0.0; p];
        let mut scratch = vec![0.0; p * p];
        let mut filled = vec![false; slots as usize];

        let mut cursor = 0;
        while cursor < present.len() {
            let seg_index = (times[present[cursor]] - first) / segment;
            let seg_start = first + seg_index * segment;
            let mut end = cursor;
            while end < present.len() && times[present[end]] < seg_start + segment {
                end += 1;
            }
            let members = &present[cursor..end];
            let on_grid = members.iter().all(|&i| (times[i] - seg_start) % step == 0);
            seg_rhs.iter_mut().for_each(|v| *v = 0.0);
            if on_grid {
                filled.iter_mut().for_each(|v| *v = false);
                for &i in members {
                    let slot = ((times[i] - seg_start) / step) as usize;
                    filled[slot] = true;
                    let y = levels[i] - offset;
                    sum_sq += y * y;
                    sum_y += y;
                    axpy(&mut seg_rhs, y, basis.row(slot));
                }
                if members.len() * 2 >= slots as usize {
                    seg_gram.copy_from_slice(&basis.gram);
                    for (slot, _) in filled.iter().enumerate().filter(|(_, f)| !**f) {
                        add_outer(&mut seg_gram, basis.row(slot), -1.0, p);
                    }
                } else {
                    seg_gram.iter_mut().for_each(|v| *v = 0.0);
                    for &i in members {
                        let slot = ((times[i] - seg_start) / step) as usize;
                        add_outer(&mut seg_gram, basis.row(slot), 1.0, p);
                    }
                }
            } else {
                seg_gram.iter_mut().for_each(|v| *v = 0.0);
                for &i in members {
                    let tau_h = (times[i] - seg_start) as f64 / HOUR;
                    layout.fill_basis(&mut z, &omega, tau_h);
                    let y = levels[i] - offset;
                    sum_sq += y * y;
                    sum_y += y;
                    axpy(&mut seg_rhs, y, &z);
                    add_outer(&mut seg_gram, &z, 1.0, p);
                }
            }
            mirror_upper(&mut seg_gram, p);
            let rows = layout.rotation(&cons, seg_start, segment, reference_time);
            rotate_into(
                &mut normal,
                &mut rhs,
                &seg_gram,
                &seg_rhs,
                &rows,
                &mut scratch,
                p,
            );
            cursor = end;
        }

        let a = DMatrix::from_row_slice(p, p, &normal);
        let b = DVector::from_column_slice(&rhs);
        let chol = a.cholesky().ok_or(TideError::Singular {
            constituents: cons.len(),
        })?;
        let beta = chol.solve(&b);
        let inverse = chol.inverse();

        let mean = beta[0] + offset;
        let trend_per_year = layout.trend.then(|| beta[1]);
        let mut model = TideModel {
            mean,
            trend_per_year,
            reference_time,
            constituents: cons
                .iter()
                .enumerate()
                .map(|(k, c)| {
                    let (ai, bi) = (beta[layout.cos(k)], beta[layout.sin(k)]);
                    FittedConstituent {
                        constituent: c,
                        amplitude: ai.hypot(bi),
                        phase_deg: bi.atan2(ai).to_degrees().rem_euclid(360.0),
                        amplitude_ci95: f64::NAN,
                        phase_ci95_deg: f64::NAN,
                    }
                })
                .collect(),
            fit: None,
        };

        // Residuals and their spectrum, for the intervals and the summary.
        let present_times: Vec<i64> = present.iter().map(|&i| times[i]).collect();
        let mut residuals = model.predict_at(&present_times);
        for (r, &i) in residuals.iter_mut().zip(&present) {
            *r = levels[i] - *r;
        }
        let n = residuals.len() as f64;
        let rss: f64 = residuals.iter().map(|r| r * r).sum();
        let white = rss / (n - p as f64);
        let noise = BandNoise::estimate(&present_times, &residuals, &omega, span_hours, white);
        for (k, fc) in model.constituents.iter_mut().enumerate() {
            let s2 = noise.variance(k);
            let (ci, si) = (layout.cos(k), layout.sin(k));
            let (va, vb, cab) = (
                s2 * inverse[(ci, ci)],
                s2 * inverse[(si, si)],
                s2 * inverse[(ci, si)],
            );
            let (ai, bi) = (beta[ci], beta[si]);
            let amp2 = ai * ai + bi * bi;
            if amp2 > 0.0 {
                let var_amp = (ai * ai * va + bi * bi * vb + 2.0 * ai * bi * cab) / amp2;
                let var_phase = (bi * bi * va + ai * ai * vb - 2.0 * ai * bi * cab) / (amp2 * amp2);
                fc.amplitude_ci95 = Z95 * var_amp.max(0.0).sqrt();
                fc.phase_ci95_deg = (Z95 * var_phase.max(0.0).sqrt()).to_degrees().min(180.0);
            }
        }
        let centred_ss = sum_sq - sum_y * sum_y / n;
        let variance_explained = if centred_ss > 0.0 {
            (1.0 - rss / centred_ss).clamp(0.0, 1.0)
        } else {
            0.0
        };
        model.fit = Some(FitSummary {
            samples: present.len(),
            first_time: first,
            last_time: last,
            step_seconds: step,
            residual_rms: (rss / n).sqrt(),
            variance_explained,
            ci_method: "linearized 95% intervals: coefficient covariance scaled by the residual \
                        periodogram averaged over each constituent's frequency band (after \
                        Pawlowicz, Beardsley & Lentz 2002)"
                .to_owned(),
        });
        Ok(model)
    }
}

/// Column layout: mean, optional trend, then cos and sin per constituent.
struct Layout {
    trend: bool,
    constituents: usize,
}

impl Layout {
    fn new(trend: bool, constituents: usize) -> Self {
        Self {
            trend,
            constituents,
        }
    }
    fn head(&self) -> usize {
        if self.trend { 2 } else { 1 }
    }
    fn size(&self) -> usize {
        self.head() + 2 * self.constituents
    }
    fn cos(&self, k: usize) -> usize {
        self.head() + 2 * k
    }
    fn sin(&self, k: usize) -> usize {
        self.head() + 2 * k + 1
    }

    /// The segment basis `z(tau)`: 1, tau in years (trend), cos and sin of `w_k tau`.
    fn fill_basis(&self, z: &mut [f64], omega: &[f64], tau_hours: f64) {
        z[0] = 1.0;
        if self.trend {
            z[1] = tau_hours / HOURS_PER_YEAR;
        }
        for (k, w) in omega.iter().enumerate() {
            let (s, c) = (w * tau_hours).sin_cos();
            z[self.cos(k)] = c;
            z[self.sin(k)] = s;
        }
    }

    /// Rows of the map `x = R z` for a segment: each row has at most two non-zero entries.
    fn rotation(
        &self,
        cons: &[&'static Constituent],
        seg_start: i64,
        segment: i64,
        reference_time: i64,
    ) -> Vec<[(usize, f64); 2]> {
        let mut rows = Vec::with_capacity(self.size());
        rows.push([(0, 1.0), (0, 0.0)]);
        if self.trend {
            let shift = (seg_start - reference_time) as f64 / HOUR / HOURS_PER_YEAR;
            rows.push([(1, 1.0), (0, shift)]);
        }
        let astro = Astro::at(seg_start as f64);
        let angles = NodalAngles::at(&Astro::at((seg_start + segment / 2) as f64));
        for (k, c) in cons.iter().enumerate() {
            let (f, u) = angles.factor(c);
            let phi = (astro.equilibrium_argument(c) + u).to_radians();
            let (s, co) = phi.sin_cos();
            let (ci, si) = (self.cos(k), self.sin(k));
            rows.push([(ci, f * co), (si, -f * s)]);
            rows.push([(ci, f * s), (si, f * co)]);
        }
        rows
    }
}

/// The basis table of one full segment on the regular grid and its Gram matrix.
struct SegmentBasis {
    p: usize,
    table: Vec<f64>,
    gram: Vec<f64>,
}

impl SegmentBasis {
    fn new(layout: &Layout, omega: &[f64], step: i64, slots: i64) -> Self {
        let p = layout.size();
        let mut table = vec![0.0; p * slots as usize];
        let mut gram = vec![0.0; p * p];
        for (slot, row) in table.chunks_exact_mut(p).enumerate() {
            let tau_h = (slot as i64 * step) as f64 / HOUR;
            layout.fill_basis(row, omega, tau_h);
            add_outer(&mut gram, row, 1.0, p);
        }
        Self { p, table, gram }
    }
    fn row(&self, slot: usize) -> &[f64] {
        &self.table[slot * self.p..(slot + 1) * self.p]
    }
}

/// Adds `w z z'` to the upper triangle of the row-major `p x p` matrix `g`.
fn add_outer(g: &mut [f64], z: &[f64], w: f64, p: usize) {
    for i in 0..p {
        let wz = w * z[i];
        let row = &mut g[i * p + i..(i + 1) * p];
        for (gij, zj) in row.iter_mut().zip(&z[i..]) {
            *gij += wz * zj;
        }
    }
}

fn mirror_upper(g: &mut [f64], p: usize) {
    for i in 0..p {
        for j in 0..i {
            g[i * p + j] = g[j * p + i];
        }
    }
}

fn axpy(y: &mut [f64], a: f64, x: &[f64]) {
    for (yi, xi) in y.iter_mut().zip(x) {
        *yi += a * xi;
    }
}

/// `normal += R G R'`, `rhs += R b` for sparse rows `R`.
fn rotate_into(
    normal: &mut [f64],
    rhs: &mut [f64],
    gram: &[f64],
    b: &[f64],
    rows: &[[(usize, f64); 2]],
    scratch: &mut [f64],
    p: usize,
) {
    // scratch = G R'  (p x p): scratch[a][j] = sum_b G[a][b] R[j][b]
    for a in 0..p {
        let grow = &gram[a * p..(a + 1) * p];
        let srow = &mut scratch[a * p..(a + 1) * p];
        for (j, r) in rows.iter().enumerate() {
            srow[j] = grow[r[0].0] * r[0].1 + grow[r[1].0] * r[1].1;
        }
    }
    for (i, r) in rows.iter().enumerate() {
        let nrow = &mut normal[i * p..(i + 1) * p];
        let (s0, s1) = (
            &scratch[r[0].0 * p..(r[0].0 + 1) * p],
            &scratch[r[1].0 * p..(r[1].0 + 1) * p],
        );
        for j in 0..p {
            nrow[j] += r[0].1 * s0[j] + r[1].1 * s1[j];
        }
        rhs[i] += r[0].1 * b[r[0].0] + r[1].1 * b[r[1].0];
    }
}

/// The most common positive interval between valid samples (ties: the shortest).
fn dominant_step(times: &[i64], present: &[usize]) -> i64 {
    let mut counts: std::collections::BTreeMap<i64, usize> = std::collections::BTreeMap::new();
    for pair in present.windows(2).take(20_000) {
        *counts.entry(times[pair[1]] - times[pair[0]]).or_default() += 1;
    }
    counts
        .into_iter()
        .max_by(|a, b| a.1.cmp(&b.1).then(b.0.cmp(&a.0)))
        .map_or(3600, |(step, _)| step.max(1))
}

fn provisional_mean(levels: &[f64], present: &[usize]) -> f64 {
    let head = &present[..present.len().min(2_000)];
    head.iter().map(|&i| levels[i]).sum::<f64>() / head.len() as f64
}

/// Residual noise variance per constituent from the residual periodogram near its frequency.
struct BandNoise {
    per_constituent: Vec<f64>,
}

impl BandNoise {
    fn estimate(
        times: &[i64],
        residuals: &[f64],
        omega_deg_per_hour: &[f64],
        span_hours: f64,
        white: f64,
    ) -> Self {
        // Constituent frequencies in cycles per day.
        let cpd: Vec<f64> = omega_deg_per_hour
            .iter()
            .map(|w| w.to_degrees() / 360.0 * 24.0)
            .collect();
        let resolution_cpd = 24.0 / span_hours.max(1.0);
        let bands: Vec<usize> = cpd.iter().map(|f| f.round() as usize).collect();
        let mut per_constituent = vec![white; cpd.len()];
        // Test frequencies of every band holding a constituent, evaluated in one pass.
        let mut band_tests: Vec<(usize, Vec<f64>)> = Vec::new();
        for &band in &bands {
            if band_tests.iter().any(|(b, _)| *b == band) {
                continue;
            }
            let tests: Vec<f64> = if band == 0 {
                let lo = (2.0 * resolution_cpd).min(0.2);
                let hi: f64 = 0.45;
                let last = (LONG_PERIOD_TEST_FREQUENCIES - 1) as f64;
                (0..LONG_PERIOD_TEST_FREQUENCIES)
                    .map(|j| lo * (hi / lo).powf(j as f64 / last))
                    .collect()
            } else {
                (0..BAND_TEST_FREQUENCIES)
                    .map(|j| {
                        band as f64 - 0.4 + 0.8 * j as f64 / (BAND_TEST_FREQUENCIES - 1) as f64
                    })
                    .filter(|f| cpd.iter().all(|c| (c - f).abs() > 2.0 * resolution_cpd))
                    .collect()
            };
            if tests.len() >= 3 {
                band_tests.push((band, tests));
            }
        }
        let all: Vec<f64> = band_tests
            .iter()
            .flat_map(|(_, t)| t.iter().copied())
            .collect();
        let all_power = periodogram(times, residuals, &all);
        let mut offset = 0;
        for (band, tests) in &band_tests {
            let power = &all_power[offset..offset + tests.len()];
            offset += tests.len();
            for (k, &b) in bands.iter().enumerate() {
                if b != *band {
                    continue;
                }
                per_constituent[k] = if b == 0 {
                    // The test frequencies nearest (in log frequency) to the constituent.
                    let mut near: Vec<(f64, f64)> = tests
                        .iter()
                        .zip(power)
                        .map(|(f, pw)| ((f.ln() - cpd[k].max(1e-6).ln()).abs(), *pw))
                        .collect();
                    near.sort_by(|a, b| a.0.total_cmp(&b.0));
                    near.iter()
                        .take(LONG_PERIOD_NEAREST)
                        .map(|x| x.1)
                        .sum::<f64>()
                        / LONG_PERIOD_NEAREST as f64
                } else {
                    power.iter().sum::<f64>() / power.len() as f64
                };
            }
        }
        Self { per_constituent }
    }

    fn variance(&self, k: usize) -> f64 {
        self.per_constituent[k]
    }
}

/// Periodogram `|sum r e^{-i w t}|^2 / n` at frequencies in cycles per day (white noise of
/// variance s2 gives s2 on average). All frequencies advance together by rotation from
/// sample to sample, reseeded exactly every few thousand samples and after irregular gaps.
fn periodogram(times: &[i64], r: &[f64], freqs_cpd: &[f64]) -> Vec<f64> {
    let nf = freqs_cpd.len();
    let w: Vec<f64> = freqs_cpd
        .iter()
        .map(|f| 2.0 * std::f64::consts::PI * f / 86_400.0)
        .collect();
    let (mut sr, mut si) = (vec![0.0; nf], vec![0.0; nf]);
    let (mut cr, mut ci) = (vec![0.0; nf], vec![0.0; nf]);
    let (mut rr, mut ri) = (vec![1.0; nf], vec![0.0; nf]);
    let mut base_step = 0i64;
    let t0 = times.first().copied().unwrap_or(0);
    let mut last = t0;
    for (k, (&t, &x)) in times.iter().zip(r).enumerate() {
        let step = t - last;
        let rotations = if base_step > 0 && step % base_step == 0 {
            step / base_step
        } else {
            0
        };
        if k % 4096 == 0 || !(1..=16).contains(&rotations) {
            if k > 0 && base_step == 0 {
                base_step = step.max(1);
                for j in 0..nf {
                    let (s, c) = (w[j] * base_step as f64).sin_cos();
                    rr[j] = c;
                    ri[j] = s;
                }
            }
            for j in 0..nf {
                let (s, c) = (w[j] * (t - t0) as f64).sin_cos();
                cr[j] = c;
                ci[j] = s;
            }
        } else {
            for _ in 0..rotations - 1 {
                rotate_all(&mut cr, &mut ci, &rr, &ri);
            }
            rotate_accumulate(&mut cr, &mut ci, &rr, &ri, &mut sr, &mut si, x);
            last = t;
            continue;
        }
        last = t;
        for j in 0..nf {
            sr[j] += x * cr[j];
            si[j] += x * ci[j];
        }
    }
    let n = r.len() as f64;
    sr.iter()
        .zip(&si)
        .map(|(a, b)| (a * a + b * b) / n)
        .collect()
}

fn rotate_all(cr: &mut [f64], ci: &mut [f64], rr: &[f64], ri: &[f64]) {
    let n = cr.len();
    let (ci, rr, ri) = (&mut ci[..n], &rr[..n], &ri[..n]);
    for j in 0..n {
        let (a, b) = (cr[j], ci[j]);
        cr[j] = a * rr[j] - b * ri[j];
        ci[j] = a * ri[j] + b * rr[j];
    }
}

/// One rotation of every phasor, then `s += x * phasor`, fused so it vectorises.
fn rotate_accumulate(
    cr: &mut [f64],
    ci: &mut [f64],
    rr: &[f64],
    ri: &[f64],
    sr: &mut [f64],
    si: &mut [f64],
    x: f64,
) {
    let n = cr.len();
    let (ci, rr, ri, sr, si) = (&mut ci[..n], &rr[..n], &ri[..n], &mut sr[..n], &mut si[..n]);
    for j in 0..n {
        let (a, b) = (cr[j], ci[j]);
        let (na, nb) = (a * rr[j] - b * ri[j], a * ri[j] + b * rr[j]);
        cr[j] = na;
        ci[j] = nb;
        sr[j] += x * na;
        si[j] += x * nb;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Synthetic tide with known constituents plus seeded white noise.
    fn synthetic(hours: i64, noise_sd: f64, truth: &[(&str, f64, f64)]) -> (Vec<i64>, Vec<f64>) {
        use rand::SeedableRng;
        use rand_distr::{Distribution, Normal};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
        let normal = Normal::new(0.0, noise_sd).expect("valid sd");
        let start = 1_104_537_600; // 2005-01-01T00:00Z
        let values: Vec<_> = truth
            .iter()
            .map(|(n, a, g)| super::super::predict::ConstituentValue {
                name: n,
                amplitude: *a,
                phase_deg: *g,
            })
            .collect();
        let model = TideModel::from_values(1.5, None, start, &values).expect("valid");
        let times: Vec<i64> = (0..hours).map(|k| start + k * 3600).collect();
        let mut levels = model.predict_at(&times);
        for l in &mut levels {
            *l += normal.sample(&mut rng);
        }
        (times, levels)
    }

    #[test]
    fn recovers_synthetic_constituents_with_gaps() {
        let truth = [
            ("M2", 1.2, 35.0),
            ("S2", 0.3, 80.0),
            ("N2", 0.25, 10.0),
            ("K1", 0.4, 200.0),
            ("O1", 0.3, 170.0),
            ("M4", 0.05, 300.0),
        ];
        let (times, mut levels) = synthetic(2 * 8766, 0.02, &truth);
        for l in levels.iter_mut().skip(3000).take(500) {
            *l = f64::NAN;
        }
        let model = AnalysisParams::default()
            .check()
            .expect("valid")
            .fit(&times, &levels)
            .expect("fits");
        assert!((model.mean - 1.5).abs() < 0.002, "mean {}", model.mean);
        for (name, amp, phase) in truth {
            let c = model.constituent(name).expect("selected");
            assert!(
                (c.amplitude - amp).abs() < 0.002,
                "{name} amp {}",
                c.amplitude
            );
            let dphase = ((c.phase_deg - phase + 540.0) % 360.0 - 180.0).abs();
            assert!(dphase < 1.0, "{name} phase {}", c.phase_deg);
            assert!(
                c.amplitude_ci95 > 0.0 && c.amplitude_ci95 < 0.01,
                "{name} ci {}",
                c.amplitude_ci95
            );
        }
        assert!(
            model.constituents.len() >= 37,
            "{}",
            model.constituents.len()
        );
    }

    #[test]
    fn rayleigh_selection_grows_with_record_length() {
        let twenty_years = constituents::select_rayleigh(20.0 * 8766.0, 1.0);
        assert_eq!(twenty_years.len(), constituents::STANDARD.len());
        assert!(constituents::STANDARD.len() >= 37);
        let month = constituents::select_rayleigh(30.0 * 24.0, 1.0);
        let names: Vec<&str> = month.iter().map(|c| c.name).collect();
        for name in ["M2", "S2", "N2", "K1", "O1", "M4"] {
            assert!(names.contains(&name), "{name} missing from {names:?}");
        }
        // K2 and P1 lie within 1/720 cycles per hour of S2 and K1: not resolved in a month.
        assert!(
            !names.contains(&"K2") && !names.contains(&"P1"),
            "{names:?}"
        );
        // Two hours resolve nothing below 0.5 cycles per hour, i.e. no constituent.
        assert!(constituents::select_rayleigh(2.0, 1.0).is_empty());
    }

    #[test]
    fn off_grid_samples_fit_like_grid_samples() {
        let truth = [("M2", 1.0, 100.0), ("K1", 0.3, 20.0), ("O1", 0.2, 300.0)];
        let (times, levels) = synthetic(24 * 200, 0.0, &truth);
        let config = AnalysisParams::default().check().expect("valid");
        let on_grid = config.fit(&times, &levels).expect("fits");
        // Move every reading by a varying few minutes and re-predict: all off the grid.
        let moved: Vec<i64> = times
            .iter()
            .enumerate()
            .map(|(k, t)| t + ((k as i64 * 7919) % 600))
            .collect();
        let values: Vec<_> = truth
            .iter()
            .map(|(n, a, g)| super::super::predict::ConstituentValue {
                name: n,
                amplitude: *a,
                phase_deg: *g,
            })
            .collect();
        let model = TideModel::from_values(1.5, None, times[0], &values).expect("valid");
        let moved_levels = model.predict_at(&moved);
        let off_grid = config.fit(&moved, &moved_levels).expect("fits");
        for (name, amp, _) in truth {
            let a = on_grid.constituent(name).expect("fitted").amplitude;
            let b = off_grid.constituent(name).expect("fitted").amplitude;
            assert!(
                (a - amp).abs() < 1e-3 && (b - amp).abs() < 1e-3,
                "{name}: {a} {b}"
            );
        }
    }

    #[test]
    fn recovers_a_linear_trend() {
        let truth = [("M2", 1.0, 10.0), ("S2", 0.3, 40.0)];
        let (times, mut levels) = synthetic(3 * 8766, 0.01, &truth);
        let mid = times[times.len() / 2];
        for (t, l) in times.iter().zip(levels.iter_mut()) {
            *l += 0.004 * (t - mid) as f64 / HOUR / HOURS_PER_YEAR;
        }
        let params = AnalysisParams {
            trend: true,
            ..AnalysisParams::default()
        };
        let model = params
            .check()
            .expect("valid")
            .fit(&times, &levels)
            .expect("fits");
        let trend = model.trend_per_year.expect("trend fitted");
        assert!((trend - 0.004).abs() < 2e-4, "trend {trend}");
        assert!((model.mean_level_at(mid) - 1.5).abs() < 2e-3);
    }

    #[test]
    fn bad_records_are_typed_errors() {
        let config = AnalysisParams::default().check().expect("valid");
        assert!(matches!(
            config.fit(&[0, 3600, 3600], &[1.0, 2.0, 3.0]),
            Err(TideError::Unsorted { index: 2, .. })
        ));
        assert!(matches!(
            config.fit(&[0, 3600], &[1.0]),
            Err(TideError::LengthMismatch { .. })
        ));
        let times: Vec<i64> = (0..3).map(|k| k * 3600).collect();
        assert!(matches!(
            config.fit(&times, &[1.0; 3]),
            Err(TideError::NoConstituents { .. })
        ));
        assert!(matches!(
            config.fit(&times, &[f64::NAN; 3]),
            Err(TideError::TooFewSamples { .. })
        ));
        let named = AnalysisParams {
            constituents: Some(vec!["X9".into()]),
            ..AnalysisParams::default()
        };
        assert!(matches!(
            named.check(),
            Err(TideError::UnknownConstituent(_))
        ));
        let bad = AnalysisParams {
            rayleigh: f64::NAN,
            ..AnalysisParams::default()
        };
        assert!(matches!(bad.check(), Err(TideError::BadParameter { .. })));
    }

    #[test]
    fn prediction_at_scattered_times_matches_regular_prediction() {
        let values: Vec<_> = constituents::STANDARD
            .iter()
            .map(|c| super::super::predict::ConstituentValue {
                name: c.name,
                amplitude: 0.1,
                phase_deg: 33.0,
            })
            .collect();
        let model =
            TideModel::from_values(0.5, Some(0.003), 1_600_000_000, &values).expect("valid");
        let start = 1_600_000_000 - 5 * 86_400;
        let regular = model.predict_regular(start, 600, 24 * 6 * 70);
        // The same times visited out of order and one at a time.
        for k in [0usize, 5000, 17, 9000, 3, 8000] {
            let t = start + k as i64 * 600;
            let single = model.predict_at(&[t])[0];
            assert!(
                (single - regular[k]).abs() < 1e-9,
                "k {k}: {single} vs {}",
                regular[k]
            );
        }
    }
}
