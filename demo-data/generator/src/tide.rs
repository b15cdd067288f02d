//! The astronomical tide: mean longitudes of the Moon and Sun, equilibrium arguments `V` of
//! each constituent from its Doodson-style coefficients, Schureman's nodal factors `f` and
//! angles `u`, and the tide `sum f A cos(V + u - g)` with Greenwich phase lags `g`.

use serde::Serialize;

use crate::calendar::{MINUTES_PER_DAY, julian_centuries};

/// Mean astronomical longitudes in degrees (Meeus, "Astronomical Algorithms", 2nd ed.,
/// ch. 47 and 25, polynomials in Julian centuries from J2000; recalled from memory).
#[derive(Debug, Clone, Copy)]
pub struct MeanLongitudes {
    /// Moon's mean longitude `s`.
    pub s: f64,
    /// Sun's mean longitude `h`.
    pub h: f64,
    /// Longitude of the Moon's perigee `p`.
    pub p: f64,
    /// Longitude of the Moon's ascending node `N`.
    pub n: f64,
    /// Longitude of the Sun's perigee `p'`.
    pub p1: f64,
}

/// Mean longitudes at `t` Julian centuries from J2000.
pub fn mean_longitudes(t: f64) -> MeanLongitudes {
    let t2 = t * t;
    MeanLongitudes {
        s: 218.316_447_7 + 481_267.881_234_21 * t - 0.001_578_6 * t2,
        h: 280.466_46 + 36_000.769_83 * t + 0.000_303_2 * t2,
        p: 83.353_246_5 + 4_069.013_728_7 * t - 0.010_320_0 * t2,
        n: 125.044_52 - 1_934.136_261 * t + 0.002_070_8 * t2,
        p1: 282.937_35 + 1.719_46 * t + 0.000_46 * t2,
    }
}

/// Which of Schureman's nodal modulation formulas a constituent uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Nodal {
    /// No modulation (f = 1, u = 0): solar constituents.
    None,
    /// M2 family: f = cos^4(I/2) / 0.9154, u = 2 xi - 2 nu (Schureman eqs. 78, 215).
    M2,
    /// O1 family: f = sin I cos^2(I/2) / 0.3800, u = 2 xi - nu (Schureman eqs. 75, 207).
    O1,
    /// K1: f = (0.8965 sin^2 2I + 0.6001 sin 2I cos nu + 0.1006)^1/2, u = -nu' (eqs. 227, 224).
    K1,
    /// K2: f = (19.0444 sin^4 I + 2.7702 sin^2 I cos 2nu + 0.0981)^1/2, u = -2nu'' (eqs. 235, 232).
    K2,
    /// M4: f = f(M2)^2, u = 2 u(M2).
    M2Squared,
}

/// One harmonic constituent: coefficients of `T, s, h, p, p'` and a constant in the
/// equilibrium argument `V = cT*T + cs*s + ch*h + cp*p + cp1*p' + offset`, where `T` is the hour
/// angle of the mean Sun at Greenwich (180 deg at 00:00 UT), following Schureman (1958),
/// Table 2 (recalled from memory).
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Constituent {
    /// Conventional name.
    pub name: &'static str,
    /// Coefficients of T, s, h, p, p'.
    pub coefficients: [i32; 5],
    /// Constant phase in degrees.
    pub offset_deg: f64,
    /// Nodal modulation formula.
    pub nodal: Nodal,
}

const fn constituent(
    name: &'static str,
    c: [i32; 5],
    offset_deg: f64,
    nodal: Nodal,
) -> Constituent {
    Constituent {
        name,
        coefficients: c,
        offset_deg,
        nodal,
    }
}

/// The twelve constituents of the demo tide, in the order used by [`TideModel`].
pub const CONSTITUENTS: [Constituent; 12] = [
    constituent("M2", [2, -2, 2, 0, 0], 0.0, Nodal::M2),
    constituent("S2", [2, 0, 0, 0, 0], 0.0, Nodal::None),
    constituent("N2", [2, -3, 2, 1, 0], 0.0, Nodal::M2),
    constituent("K2", [2, 0, 2, 0, 0], 0.0, Nodal::K2),
    constituent("K1", [1, 0, 1, 0, 0], -90.0, Nodal::K1),
    constituent("O1", [1, -2, 1, 0, 0], 90.0, Nodal::O1),
    constituent("P1", [1, 0, -1, 0, 0], 90.0, Nodal::None),
    constituent("Q1", [1, -3, 1, 1, 0], 90.0, Nodal::O1),
    constituent("M4", [4, -4, 4, 0, 0], 0.0, Nodal::M2Squared),
    constituent("MS4", [4, -2, 2, 0, 0], 0.0, Nodal::M2),
    // Sa as h - p' (Doodson number 056.554, as in the IHO list and t_tide); Schureman uses h.
    constituent("Sa", [0, 0, 1, 0, -1], 0.0, Nodal::None),
    constituent("Ssa", [0, 0, 2, 0, 0], 0.0, Nodal::None),
];

/// Rates of T, s, h, p, p' in degrees per mean solar hour, from [`mean_longitudes`].
const RATES_DEG_PER_HOUR: [f64; 5] = [
    15.0,
    481_267.881_234_21 / 876_600.0,
    36_000.769_83 / 876_600.0,
    4_069.013_728_7 / 876_600.0,
    1.719_46 / 876_600.0,
];

impl Constituent {
    /// Angular speed in degrees per hour.
    pub fn speed_deg_per_hour(&self) -> f64 {
        self.coefficients
            .iter()
            .zip(RATES_DEG_PER_HOUR)
            .map(|(&c, rate)| f64::from(c) * rate)
            .sum()
    }

    /// Doodson numbers (coefficients of tau, s, h, p, N', p', with lunar time
    /// tau = 15 deg/h * UT hours + h - s) and the constant phase in that form, degrees in
    /// [0, 360): the same argument as [`Constituent::coefficients`] since T = tau + s - h + 180.
    pub fn doodson(&self) -> ([i32; 6], f64) {
        let [ct, cs, ch, cp, cp1] = self.coefficients;
        let offset = (self.offset_deg + 180.0 * f64::from(ct)).rem_euclid(360.0);
        ([ct, ct + cs, ch - ct, cp, 0, cp1], offset)
    }

    /// Equilibrium argument V in degrees (not reduced) for hour angle `t_deg` and longitudes.
    fn argument(&self, t_deg: f64, lon: &MeanLongitudes) -> f64 {
        let [ct, cs, ch, cp, cp1] = self.coefficients.map(f64::from);
        ct * t_deg + cs * lon.s + ch * lon.h + cp * lon.p + cp1 * lon.p1 + self.offset_deg
    }
}

/// Schureman's lunar-orbit angles derived from the node longitude N, in radians.
#[derive(Debug, Clone, Copy)]
struct OrbitAngles {
    i: f64,
    nu: f64,
    xi: f64,
    nu_prime: f64,
    two_nu_second: f64,
}

/// Obliquity of the ecliptic, degrees (Schureman's value).
const OBLIQUITY_DEG: f64 = 23.452;
/// Inclination of the Moon's orbit to the ecliptic, degrees.
const MOON_INCLINATION_DEG: f64 = 5.145;

fn orbit_angles(n_deg: f64) -> OrbitAngles {
    let n = n_deg.to_radians();
    let w = OBLIQUITY_DEG.to_radians();
    let i_m = MOON_INCLINATION_DEG.to_radians();
    let i = (w.cos() * i_m.cos() - w.sin() * i_m.sin() * n.cos()).acos();
    let half_tan = (0.5 * n).tan();
    let e1 = ((0.5 * (w - i_m)).cos() / (0.5 * (w + i_m)).cos() * half_tan).atan() - 0.5 * n;
    let e2 = ((0.5 * (w - i_m)).sin() / (0.5 * (w + i_m)).sin() * half_tan).atan() - 0.5 * n;
    let xi = -(e1 + e2);
    let nu = e1 - e2;
    let sin_2i = (2.0 * i).sin();
    let nu_prime = (sin_2i * nu.sin()).atan2(sin_2i * nu.cos() + 0.3347);
    let sin2_i = i.sin().powi(2);
    let two_nu_second = (sin2_i * (2.0 * nu).sin()).atan2(sin2_i * (2.0 * nu).cos() + 0.0727);
    OrbitAngles {
        i,
        nu,
        xi,
        nu_prime,
        two_nu_second,
    }
}

/// Nodal factor f and angle u (degrees) of one formula family.
fn nodal_factor(kind: Nodal, a: &OrbitAngles) -> (f64, f64) {
    let m2 = || {
        (
            (0.5 * a.i).cos().powi(4) / 0.9154,
            (2.0 * a.xi - 2.0 * a.nu).to_degrees(),
        )
    };
    match kind {
        Nodal::None => (1.0, 0.0),
        Nodal::M2 => m2(),
        Nodal::M2Squared => {
            let (f, u) = m2();
            (f * f, 2.0 * u)
        }
        Nodal::O1 => (
            a.i.sin() * (0.5 * a.i).cos().powi(2) / 0.3800,
            (2.0 * a.xi - a.nu).to_degrees(),
        ),
        Nodal::K1 => {
            let s2i = (2.0 * a.i).sin();
            (
                (0.8965 * s2i * s2i + 0.6001 * s2i * a.nu.cos() + 0.1006).sqrt(),
                -a.nu_prime.to_degrees(),
            )
        }
        Nodal::K2 => {
            let si = a.i.sin();
            (
                (19.0444 * si.powi(4) + 2.7702 * si * si * (2.0 * a.nu).cos() + 0.0981).sqrt(),
                -a.two_nu_second.to_degrees(),
            )
        }
    }
}

/// One constituent's amplitude and Greenwich phase lag at a gauge.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Harmonic {
    /// Amplitude in metres.
    pub amplitude_m: f64,
    /// Greenwich phase lag g in degrees.
    pub phase_deg: f64,
}

/// A gauge's tide: one [`Harmonic`] per entry of [`CONSTITUENTS`].
#[derive(Debug, Clone)]
pub struct TideModel {
    /// Harmonics in the order of [`CONSTITUENTS`].
    pub harmonics: [Harmonic; 12],
}

impl TideModel {
    /// Tide height in metres about mean sea level at a UTC time (minutes since 1970).
    pub fn height(&self, minutes_utc: i64) -> f64 {
        arguments(minutes_utc)
            .iter()
            .zip(&self.harmonics)
            .map(|(a, h)| {
                let phase = (a.v_deg + a.u_deg - h.phase_deg).rem_euclid(360.0);
                a.f * h.amplitude_m * phase.to_radians().cos()
            })
            .sum()
    }
}

/// One constituent's nodal factor, nodal angle and equilibrium argument at an instant.
#[derive(Debug, Clone, Copy)]
pub struct Argument {
    /// Nodal factor f.
    pub f: f64,
    /// Nodal angle u, degrees.
    pub u_deg: f64,
    /// Equilibrium argument V, degrees in [0, 360).
    pub v_deg: f64,
}

/// f, u and V of every entry of [`CONSTITUENTS`] at a UTC time (minutes since 1970).
pub fn arguments(minutes_utc: i64) -> [Argument; 12] {
    let lon = mean_longitudes(julian_centuries(minutes_utc));
    let angles = orbit_angles(lon.n);
    let t_deg = 180.0 + 0.25 * minutes_utc.rem_euclid(MINUTES_PER_DAY) as f64;
    CONSTITUENTS.map(|c| {
        let (f, u_deg) = nodal_factor(c.nodal, &angles);
        Argument {
            f,
            u_deg,
            v_deg: c.argument(t_deg, &lon).rem_euclid(360.0),
        }
    })
}

/// Nodal factor f of M2 at a UTC time (minutes since 1970); recorded as a tidal driver.
pub fn m2_nodal_factor(minutes_utc: i64) -> f64 {
    let lon = mean_longitudes(julian_centuries(minutes_utc));
    nodal_factor(Nodal::M2, &orbit_angles(lon.n)).0
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Constituent speeds in degrees per hour from Schureman (1958) Table 2 / the IHO
    /// constituent list, to 1e-6 deg/h (recalled from memory; Sa as h - p', 0.0410667).
    #[test]
    fn speeds_match_published_values() {
        let published = [
            ("M2", 28.984_104_2),
            ("S2", 30.0),
            ("N2", 28.439_729_5),
            ("K2", 30.082_137_3),
            ("K1", 15.041_068_6),
            ("O1", 13.943_035_6),
            ("P1", 14.958_931_4),
            ("Q1", 13.398_660_9),
            ("M4", 57.968_208_4),
            ("MS4", 58.984_104_2),
            ("Sa", 0.041_066_7),
            ("Ssa", 0.082_137_3),
        ];
        for (c, (name, speed)) in CONSTITUENTS.iter().zip(published) {
            assert_eq!(c.name, name);
            // The tolerance covers the rounding of the published 7-decimal speeds.
            assert!((c.speed_deg_per_hour() - speed).abs() < 2e-6, "{name}");
        }
    }

    /// Ranges of the nodal factors over the 18.6-year cycle, Schureman (1958) Table 14
    /// (recalled from memory): f(M2) 0.963..1.038, f(O1) 0.806..1.183, f(K1) 0.882..1.113,
    /// f(K2) 0.748..1.317.
    #[test]
    fn nodal_factor_ranges_match_schureman() {
        let range = |kind| {
            let (mut lo, mut hi) = (f64::MAX, f64::MIN);
            for step in 0..=360 {
                let (f, _) = nodal_factor(kind, &orbit_angles(f64::from(step)));
                lo = lo.min(f);
                hi = hi.max(f);
            }
            (lo, hi)
        };
        let cases = [
            (Nodal::M2, 0.963, 1.038),
            (Nodal::O1, 0.806, 1.183),
            (Nodal::K1, 0.882, 1.113),
            (Nodal::K2, 0.748, 1.317),
        ];
        for (kind, lo, hi) in cases {
            let (got_lo, got_hi) = range(kind);
            // 3e-3: the table is given to three decimals.
            assert!((got_lo - lo).abs() < 3e-3, "{kind:?} min {got_lo}");
            assert!((got_hi - hi).abs() < 3e-3, "{kind:?} max {got_hi}");
        }
    }

    /// Doodson numbers of the IHO constituent list / t_tide (recalled from memory): K1
    /// 165.555 with +90 deg, O1 145.555 with -90 deg, Sa 056.554.
    #[test]
    fn doodson_form_matches_the_usual_numbers() {
        let by_name = |n: &str| {
            CONSTITUENTS
                .iter()
                .find(|c| c.name == n)
                .expect("constituent present")
                .doodson()
        };
        assert_eq!(by_name("M2"), ([2, 0, 0, 0, 0, 0], 0.0));
        assert_eq!(by_name("K1"), ([1, 1, 0, 0, 0, 0], 90.0));
        assert_eq!(by_name("O1"), ([1, -1, 0, 0, 0, 0], 270.0));
        assert_eq!(by_name("Q1"), ([1, -2, 0, 1, 0, 0], 270.0));
        assert_eq!(by_name("N2"), ([2, -1, 0, 1, 0, 0], 0.0));
        assert_eq!(by_name("Sa"), ([0, 0, 1, 0, 0, -1], 0.0));
    }

    /// A pure M2 tide has its high water when V + u = g, i.e. the phase argument is zero.
    #[test]
    fn pure_m2_peaks_at_its_phase_lag() {
        let mut harmonics = [Harmonic {
            amplitude_m: 0.0,
            phase_deg: 0.0,
        }; 12];
        harmonics[0] = Harmonic {
            amplitude_m: 1.0,
            phase_deg: 123.0,
        };
        let model = TideModel { harmonics };
        let start = 20_000 * MINUTES_PER_DAY;
        let (best, _) = (0..(13 * 60))
            .map(|m| (m, model.height(start + m)))
            .fold((0, f64::MIN), |acc, x| if x.1 > acc.1 { x } else { acc });
        let height = model.height(start + best);
        let f = m2_nodal_factor(start + best);
        assert!((height - f).abs() < 1e-4, "peak {height} vs f {f}");
    }

    /// Solve `a x = b` by Gaussian elimination with partial pivoting (test helper).
    fn solve(mut a: Vec<Vec<f64>>, mut b: Vec<f64>) -> Vec<f64> {
        let n = b.len();
        for col in 0..n {
            let pivot = (col..n)
                .max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))
                .expect("non-empty range");
            a.swap(col, pivot);
            b.swap(col, pivot);
            let (upper, lower) = a.split_at_mut(col + 1);
            let pivot_row = &upper[col];
            for (offset, row) in lower.iter_mut().enumerate() {
                let factor = row[col] / pivot_row[col];
                for (x, p) in row.iter_mut().zip(pivot_row).skip(col) {
                    *x -= factor * p;
                }
                b[col + 1 + offset] -= factor * b[col];
            }
        }
        let mut x = vec![0.0; n];
        for row in (0..n).rev() {
            let tail: f64 = (row + 1..n).map(|k| a[row][k] * x[k]).sum();
            x[row] = (b[row] - tail) / a[row][row];
        }
        x
    }

    /// A least-squares harmonic analysis of one year of hourly tide, with the same
    /// equilibrium arguments and nodal corrections, recovers every amplitude and Greenwich
    /// phase lag: the convention `f A cos(V + u - g)` is what an analysis inverts.
    #[test]
    fn harmonic_analysis_recovers_amplitudes_and_phase_lags() {
        let mut harmonics = [Harmonic {
            amplitude_m: 0.0,
            phase_deg: 0.0,
        }; 12];
        for (k, h) in harmonics.iter_mut().enumerate() {
            h.amplitude_m = 0.02 + 0.1 * k as f64;
            h.phase_deg = (37.0 * k as f64 + 11.0) % 360.0;
        }
        let model = TideModel { harmonics };
        let start = 18_000 * MINUTES_PER_DAY;
        let n_par = 1 + 2 * CONSTITUENTS.len();
        let mut ata = vec![vec![0.0; n_par]; n_par];
        let mut aty = vec![0.0; n_par];
        for hour in 0..(366 * 24) {
            let minute = start + hour * 60;
            let mut row = vec![1.0];
            for a in arguments(minute) {
                let phase = (a.v_deg + a.u_deg).to_radians();
                row.push(a.f * phase.cos());
                row.push(a.f * phase.sin());
            }
            let y = model.height(minute);
            for i in 0..n_par {
                aty[i] += row[i] * y;
                for j in 0..n_par {
                    ata[i][j] += row[i] * row[j];
                }
            }
        }
        let x = solve(ata, aty);
        assert!(x[0].abs() < 1e-6, "mean {}", x[0]);
        for (k, h) in harmonics.iter().enumerate() {
            let (c, s) = (x[1 + 2 * k], x[2 + 2 * k]);
            let amplitude = c.hypot(s);
            let g = s.atan2(c).to_degrees().rem_euclid(360.0);
            let name = CONSTITUENTS[k].name;
            // Noise-free data: only rounding error remains.
            assert!(
                (amplitude - h.amplitude_m).abs() < 1e-6,
                "{name} A {amplitude}"
            );
            let dg = (g - h.phase_deg).rem_euclid(360.0);
            assert!(dg.min(360.0 - dg) < 1e-4, "{name} g {g} vs {}", h.phase_deg);
        }
    }
}
