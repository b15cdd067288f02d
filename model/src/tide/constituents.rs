//! The constituent table: names, Doodson numbers, phase offsets, speeds and the nodal
//! correction each constituent takes.
//!
//! Doodson numbers are in the lunar-time form (tau, s, h, p, N', p1) of Doodson (1921), with
//! tau = T + h - s and T the Greenwich hour angle of the mean sun counted from midnight; the
//! equilibrium argument is V = Doodson . (tau, s, h, p, N', p1) + offset. With T counted from
//! midnight the offsets are the usual ones of Foreman (1977): K1 +90 deg, O1 -90 deg and so on,
//! equivalent to Schureman's (1958) Table 2 arguments written with T counted from noon.

/// Rates of the astronomical variables in degrees per hour, from the linear terms of the
/// mean-longitude polynomials (Schureman 1958, Table 1; the same series Foreman 1977 uses).
pub mod rates {
    /// Mean longitude of the moon, s.
    pub const S: f64 = 13.176_396_526_8 / 24.0;
    /// Mean longitude of the sun, h.
    pub const H: f64 = 0.985_647_335_4 / 24.0;
    /// Longitude of the lunar perigee, p.
    pub const P: f64 = 0.111_404_080_3 / 24.0;
    /// Negative longitude of the moon's ascending node, N' = -N.
    pub const NP: f64 = 0.052_953_922_2 / 24.0;
    /// Longitude of the solar perigee, p1.
    pub const P1: f64 = 0.000_047_068_4 / 24.0;
    /// Mean lunar time, tau = T + h - s (T advances 15 deg/h).
    pub const TAU: f64 = 15.0 + H - S;
}

/// The basic lunar terms whose nodal factors Schureman (1958) gives in closed form; other
/// lunar constituents take one of these or a product of them.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NodalBasis {
    /// Lunar monthly, Schureman formula 73.
    Mm,
    /// Lunar fortnightly, formula 74.
    Mf,
    /// Lunar diurnal O1 (and Q1, 2Q1, rho1, sigma1), formula 75.
    O1,
    /// Lunar diurnal J1 (and chi1, theta1), formula 76.
    J1,
    /// Lunar diurnal OO1, formula 77.
    OO1,
    /// Lunisolar diurnal K1, formula 227.
    K1,
    /// Lunar semidiurnal M2 (and N2, 2N2, nu2, mu2, lambda2), formula 78.
    M2,
    /// Lunisolar semidiurnal K2, formula 235.
    K2,
    /// Lunar elliptic L2, formula 215.
    L2,
    /// Lunar terdiurnal M3, formula 149.
    M3,
}

impl NodalBasis {
    /// Every basic term, in declaration order.
    pub const ALL: [NodalBasis; 10] = [
        NodalBasis::Mm,
        NodalBasis::Mf,
        NodalBasis::O1,
        NodalBasis::J1,
        NodalBasis::OO1,
        NodalBasis::K1,
        NodalBasis::M2,
        NodalBasis::K2,
        NodalBasis::L2,
        NodalBasis::M3,
    ];
}

/// How a constituent's nodal factor f and phase u are formed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Nodal {
    /// Purely solar: f = 1, u = 0.
    Solar,
    /// Products of the basic lunar terms: f = prod f_k^|n_k|, u = sum n_k u_k (the rule for
    /// compound constituents of Foreman 1977).
    Product(&'static [(NodalBasis, i8)]),
}

/// One tidal constituent.
#[derive(Debug, Clone, PartialEq)]
pub struct Constituent {
    /// Conventional name, e.g. `M2`.
    pub name: &'static str,
    /// Doodson coefficients of (tau, s, h, p, N', p1).
    pub doodson: [i8; 6],
    /// Phase offset of the equilibrium argument in degrees.
    pub offset_deg: f64,
    /// Nodal correction rule.
    pub nodal: Nodal,
}

impl Constituent {
    /// Speed in degrees per hour.
    pub fn speed_deg_per_hour(&self) -> f64 {
        let r = [
            rates::TAU,
            rates::S,
            rates::H,
            rates::P,
            rates::NP,
            rates::P1,
        ];
        self.doodson
            .iter()
            .zip(r)
            .map(|(&n, rate)| f64::from(n) * rate)
            .sum()
    }

    /// Frequency in cycles per hour.
    pub fn cycles_per_hour(&self) -> f64 {
        self.speed_deg_per_hour() / 360.0
    }

    /// The Doodson number in its usual printed form, e.g. `255.555` for M2 (each argument
    /// number after the first is offset by 5).
    pub fn doodson_number(&self) -> String {
        let d = &self.doodson;
        let digit = |n: i8| -> String {
            let v = i32::from(n) + 5;
            if (0..=9).contains(&v) {
                v.to_string()
            } else {
                // Doodson's convention writes 10 as X, 11 as E, -1 as Z.
                match v {
                    10 => "X".to_owned(),
                    11 => "E".to_owned(),
                    -1 => "Z".to_owned(),
                    other => format!("({other})"),
                }
            }
        };
        format!(
            "{}{}{}.{}{}{}",
            d[0],
            digit(d[1]),
            digit(d[2]),
            digit(d[3]),
            digit(d[4]),
            digit(d[5])
        )
    }
}

use NodalBasis::{J1, K1, K2, L2, M2, M3, Mf, Mm, O1, OO1};

macro_rules! c {
    ($name:literal, [$($d:expr),*], $off:expr, solar) => {
        Constituent { name: $name, doodson: [$($d),*], offset_deg: $off, nodal: Nodal::Solar }
    };
    ($name:literal, [$($d:expr),*], $off:expr, [$(($b:expr, $n:expr)),*]) => {
        Constituent {
            name: $name,
            doodson: [$($d),*],
            offset_deg: $off,
            nodal: Nodal::Product(&[$(($b, $n)),*]),
        }
    };
}

/// The standard set, in order of priority for the Rayleigh selection (largest and most
/// commonly resolved first). 67 constituents: the astronomical ones whose nodal correction
/// Schureman (1958) gives in closed form, and the common shallow-water compounds.
pub static STANDARD: &[Constituent] = &[
    c!("M2", [2, 0, 0, 0, 0, 0], 0.0, [(M2, 1)]),
    c!("S2", [2, 2, -2, 0, 0, 0], 0.0, solar),
    c!("N2", [2, -1, 0, 1, 0, 0], 0.0, [(M2, 1)]),
    c!("K1", [1, 1, 0, 0, 0, 0], 90.0, [(K1, 1)]),
    c!("O1", [1, -1, 0, 0, 0, 0], -90.0, [(O1, 1)]),
    c!("K2", [2, 2, 0, 0, 0, 0], 0.0, [(K2, 1)]),
    c!("P1", [1, 1, -2, 0, 0, 0], -90.0, solar),
    c!("Q1", [1, -2, 0, 1, 0, 0], -90.0, [(O1, 1)]),
    c!("M4", [4, 0, 0, 0, 0, 0], 0.0, [(M2, 2)]),
    c!("MS4", [4, 2, -2, 0, 0, 0], 0.0, [(M2, 1)]),
    c!("MN4", [4, -1, 0, 1, 0, 0], 0.0, [(M2, 2)]),
    // Sa as h - p1 (Doodson number 056.554, as in the IHO list, Foreman 1977 and utide);
    // Schureman (1958) writes it as h alone, 0.0000020 deg/h faster.
    c!("Sa", [0, 0, 1, 0, 0, -1], 0.0, solar),
    c!("Ssa", [0, 0, 2, 0, 0, 0], 0.0, solar),
    c!("Mm", [0, 1, 0, -1, 0, 0], 0.0, [(Mm, 1)]),
    c!("Mf", [0, 2, 0, 0, 0, 0], 0.0, [(Mf, 1)]),
    c!("MSf", [0, 2, -2, 0, 0, 0], 0.0, [(M2, -1)]),
    c!("NU2", [2, -1, 2, -1, 0, 0], 0.0, [(M2, 1)]),
    c!("MU2", [2, -2, 2, 0, 0, 0], 0.0, [(M2, 1)]),
    c!("2N2", [2, -2, 0, 2, 0, 0], 0.0, [(M2, 1)]),
    c!("L2", [2, 1, 0, -1, 0, 0], 180.0, [(L2, 1)]),
    c!("LAM2", [2, 1, -2, 1, 0, 0], 180.0, [(M2, 1)]),
    c!("T2", [2, 2, -3, 0, 0, 1], 0.0, solar),
    c!("R2", [2, 2, -1, 0, 0, -1], 180.0, solar),
    c!("2SM2", [2, 4, -4, 0, 0, 0], 0.0, [(M2, -1)]),
    c!("J1", [1, 2, 0, -1, 0, 0], 90.0, [(J1, 1)]),
    c!("OO1", [1, 3, 0, 0, 0, 0], 90.0, [(OO1, 1)]),
    c!("RHO1", [1, -2, 2, -1, 0, 0], -90.0, [(O1, 1)]),
    c!("2Q1", [1, -3, 0, 2, 0, 0], -90.0, [(O1, 1)]),
    c!("SIG1", [1, -3, 2, 0, 0, 0], -90.0, [(O1, 1)]),
    c!("S1", [1, 1, -1, 0, 0, 0], 180.0, solar),
    c!("NO1", [1, 0, 0, 1, 0, 0], 90.0, [(M2, 1), (O1, -1)]),
    c!("PI1", [1, 1, -3, 0, 0, 1], -90.0, solar),
    c!("PSI1", [1, 1, 1, 0, 0, -1], 90.0, solar),
    c!("PHI1", [1, 1, 2, 0, 0, 0], 90.0, solar),
    c!("THE1", [1, 2, -2, 1, 0, 0], 90.0, [(J1, 1)]),
    c!("CHI1", [1, 0, 2, -1, 0, 0], 90.0, [(J1, 1)]),
    c!("SO1", [1, 3, -2, 0, 0, 0], 90.0, [(O1, -1)]),
    c!("MP1", [1, -1, 2, 0, 0, 0], 90.0, [(M2, 1)]),
    c!("M3", [3, 0, 0, 0, 0, 0], 180.0, [(M3, 1)]),
    c!("MK3", [3, 1, 0, 0, 0, 0], 90.0, [(M2, 1), (K1, 1)]),
    c!("2MK3", [3, -1, 0, 0, 0, 0], -90.0, [(M2, 2), (K1, -1)]),
    c!("SK3", [3, 3, -2, 0, 0, 0], 90.0, [(K1, 1)]),
    c!("SO3", [3, 1, -2, 0, 0, 0], -90.0, [(O1, 1)]),
    c!("MQ3", [3, -2, 0, 1, 0, 0], -90.0, [(M2, 1), (O1, 1)]),
    c!("M6", [6, 0, 0, 0, 0, 0], 0.0, [(M2, 3)]),
    c!("S4", [4, 4, -4, 0, 0, 0], 0.0, solar),
    c!("MK4", [4, 2, 0, 0, 0, 0], 0.0, [(M2, 1), (K2, 1)]),
    c!("SN4", [4, 1, -2, 1, 0, 0], 0.0, [(M2, 1)]),
    c!("2MS6", [6, 2, -2, 0, 0, 0], 0.0, [(M2, 2)]),
    c!("2MN6", [6, -1, 0, 1, 0, 0], 0.0, [(M2, 3)]),
    c!("S6", [6, 6, -6, 0, 0, 0], 0.0, solar),
    c!("M8", [8, 0, 0, 0, 0, 0], 0.0, [(M2, 4)]),
    c!("MSN2", [2, 3, -2, -1, 0, 0], 0.0, [(M2, 1), (M2, -1)]),
    c!("MNS2", [2, -3, 2, 1, 0, 0], 0.0, [(M2, 2)]),
    c!("MKS2", [2, 0, 2, 0, 0, 0], 0.0, [(M2, 1), (K2, 1)]),
    c!("SKM2", [2, 4, -2, 0, 0, 0], 0.0, [(M2, -1), (K2, 1)]),
    c!("OQ2", [2, -3, 0, 1, 0, 0], 180.0, [(O1, 2)]),
    c!("KJ2", [2, 3, 0, -1, 0, 0], 180.0, [(K1, 1), (J1, 1)]),
    c!("MSm", [0, 1, -2, 1, 0, 0], 0.0, [(Mm, 1)]),
    c!("2MK5", [5, 1, 0, 0, 0, 0], 90.0, [(M2, 2), (K1, 1)]),
    c!("2MO5", [5, -1, 0, 0, 0, 0], -90.0, [(M2, 2), (O1, 1)]),
    c!("2SK5", [5, 5, -4, 0, 0, 0], 90.0, [(K1, 1)]),
    c!("MSN6", [6, 1, -2, 1, 0, 0], 0.0, [(M2, 2)]),
    c!("2MK6", [6, 2, 0, 0, 0, 0], 0.0, [(M2, 2), (K2, 1)]),
    c!("2SM6", [6, 4, -4, 0, 0, 0], 0.0, [(M2, 1)]),
    c!("MSK6", [6, 4, -2, 0, 0, 0], 0.0, [(M2, 1), (K2, 1)]),
    c!("3MS8", [8, 2, -2, 0, 0, 0], 0.0, [(M2, 3)]),
];

/// Looks up a constituent of the standard set by name (exact, case-sensitive).
pub fn by_name(name: &str) -> Option<&'static Constituent> {
    STANDARD.iter().find(|c| c.name == name)
}

/// Chooses constituents for a record spanning `span_hours` by the Rayleigh criterion: taking
/// the standard set in priority order, a constituent is kept when its frequency differs from
/// zero (the mean) and from every constituent already kept by at least `rayleigh / span`
/// cycles per hour. `rayleigh = 1` is the usual choice.
pub fn select_rayleigh(span_hours: f64, rayleigh: f64) -> Vec<&'static Constituent> {
    let mut kept: Vec<&'static Constituent> = Vec::new();
    if span_hours.is_nan() || span_hours <= 0.0 {
        return kept;
    }
    let resolution = rayleigh / span_hours;
    for candidate in STANDARD {
        let f = candidate.cycles_per_hour();
        let clear_of_mean = f.abs() >= resolution;
        let clear_of_kept = kept
            .iter()
            .all(|k| (k.cycles_per_hour() - f).abs() >= resolution);
        if clear_of_mean && clear_of_kept {
            kept.push(candidate);
        }
    }
    kept
}
