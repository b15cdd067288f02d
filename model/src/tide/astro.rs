//! Astronomical arguments and nodal corrections.
//!
//! Mean longitudes follow the polynomial series of Schureman (1958, Table 1) in the form
//! Foreman (1977) tabulates, counted in days from 1899-12-31 12:00 UT (coefficients recalled
//! from memory of those tables; the checks in this module's tests pin their consequences:
//! the sun's and moon's mean longitudes at J2000 and the node's regression).
//! Nodal factors f and phases u are Schureman's (1958) closed-form expressions in the
//! inclination I of the moon's orbit to the equator and the angles nu, xi, nu', 2nu''.

use super::constituents::{Constituent, Nodal, NodalBasis};

/// Unix seconds of 1899-12-31 12:00 UT, the origin of the astronomical series.
const ORIGIN_UNIX_SECONDS: f64 = -2_209_032_000.0;
/// Obliquity of the ecliptic used by Schureman (1958), degrees.
const OBLIQUITY_DEG: f64 = 23.452;
/// Inclination of the moon's orbit to the ecliptic, degrees (Schureman 1958).
const LUNAR_INCLINATION_DEG: f64 = 5.145;

/// The astronomical variables at one instant, degrees in `[0, 360)`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Astro {
    /// Mean lunar time tau = T + h - s (T the mean solar angle counted from midnight UT).
    pub tau: f64,
    /// Mean longitude of the moon.
    pub s: f64,
    /// Mean longitude of the sun.
    pub h: f64,
    /// Longitude of the lunar perigee.
    pub p: f64,
    /// Negative longitude of the moon's ascending node, N' = -N.
    pub np: f64,
    /// Longitude of the solar perigee.
    pub p1: f64,
}

fn wrap360(x: f64) -> f64 {
    x.rem_euclid(360.0)
}

impl Astro {
    /// The variables at `unix_seconds` (UT).
    pub fn at(unix_seconds: f64) -> Self {
        let d = (unix_seconds - ORIGIN_UNIX_SECONDS) / 86_400.0;
        let big_d = d / 10_000.0;
        let poly = |c: [f64; 4]| {
            wrap360(c[0] + c[1] * d + c[2] * big_d * big_d + c[3] * big_d * big_d * big_d)
        };
        let s = poly([270.434_164, 13.176_396_526_8, -0.000_085_0, 0.000_000_039]);
        let h = poly([279.696_678, 0.985_647_335_4, 0.000_022_67, 0.0]);
        let p = poly([334.329_556, 0.111_404_080_3, -0.000_773_9, -0.000_000_26]);
        let np = poly([-259.183_275, 0.052_953_922_2, -0.000_155_7, -0.000_000_050]);
        let p1 = poly([281.220_844, 0.000_047_068_4, 0.000_033_9, 0.000_000_070]);
        let day_fraction = (unix_seconds / 86_400.0).rem_euclid(1.0);
        let tau = wrap360(360.0 * day_fraction + h - s);
        Self {
            tau,
            s,
            h,
            p,
            np,
            p1,
        }
    }

    /// Longitude of the moon's ascending node N, degrees in `(-180, 180]`.
    pub fn node(&self) -> f64 {
        let n = wrap360(-self.np);
        if n > 180.0 { n - 360.0 } else { n }
    }

    /// The equilibrium argument V of a constituent, degrees in `[0, 360)`.
    pub fn equilibrium_argument(&self, c: &Constituent) -> f64 {
        let v = [self.tau, self.s, self.h, self.p, self.np, self.p1];
        let sum: f64 = c
            .doodson
            .iter()
            .zip(v)
            .map(|(&n, x)| f64::from(n) * x)
            .sum();
        wrap360(sum + c.offset_deg)
    }
}

/// The node-dependent angles of Schureman (1958), degrees, for one node longitude N, with
/// the basic terms' f and u evaluated once.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NodalAngles {
    /// Inclination of the moon's orbit to the equator.
    pub i: f64,
    /// nu: right ascension of the lunar intersection.
    pub nu: f64,
    /// xi: longitude in the moon's orbit of the lunar intersection.
    pub xi: f64,
    /// nu': the K1 phase angle.
    pub nu_prime: f64,
    /// 2nu'': the K2 phase angle.
    pub two_nu_pp: f64,
    /// Mean longitude of the lunar perigee measured from the intersection, P = p - xi.
    pub big_p: f64,
    /// f and u of each basic term, in the order of [`NodalBasis::ALL`].
    table: [(f64, f64); 10],
}

impl NodalAngles {
    /// The angles for node longitude `node_deg` (N) and lunar perigee `perigee_deg` (p).
    pub fn new(node_deg: f64, perigee_deg: f64) -> Self {
        let rad = f64::to_radians;
        let deg = f64::to_degrees;
        let n = {
            let w = wrap360(node_deg);
            if w > 180.0 { w - 360.0 } else { w }
        };
        let (omega, inc) = (rad(OBLIQUITY_DEG), rad(LUNAR_INCLINATION_DEG));
        let nr = rad(n);
        let cos_i = omega.cos() * inc.cos() - omega.sin() * inc.sin() * nr.cos();
        let i = cos_i.acos();
        // Schureman eqs. for nu and xi via the half-angle tangents.
        let half_tan = (nr / 2.0).tan();
        let a = ((0.5 * (omega - inc)).cos() / (0.5 * (omega + inc)).cos() * half_tan).atan();
        let b = ((0.5 * (omega - inc)).sin() / (0.5 * (omega + inc)).sin() * half_tan).atan();
        let nu = a - b;
        let xi = nr - a - b;
        let nu_prime = ((2.0 * i).sin() * nu.sin()).atan2((2.0 * i).sin() * nu.cos() + 0.3347);
        let sin2 = i.sin().powi(2);
        let two_nu_pp = (sin2 * (2.0 * nu).sin()).atan2(sin2 * (2.0 * nu).cos() + 0.0727);
        let mut angles = Self {
            i: deg(i),
            nu: deg(nu),
            xi: deg(xi),
            nu_prime: deg(nu_prime),
            two_nu_pp: deg(two_nu_pp),
            big_p: perigee_deg - deg(xi),
            table: [(1.0, 0.0); 10],
        };
        for (slot, b) in NodalBasis::ALL.iter().enumerate() {
            angles.table[slot] = angles.evaluate(*b);
        }
        angles
    }

    /// The angles at an instant.
    pub fn at(astro: &Astro) -> Self {
        Self::new(astro.node(), astro.p)
    }

    /// Nodal factor f and phase u (degrees) of a basic term.
    pub fn basis(&self, b: NodalBasis) -> (f64, f64) {
        self.table[b as usize]
    }

    fn evaluate(&self, b: NodalBasis) -> (f64, f64) {
        let rad = f64::to_radians;
        let i = rad(self.i);
        let (nu, xi) = (self.nu, self.xi);
        let m2_f = (i / 2.0).cos().powi(4) / 0.9154;
        let m2_u = 2.0 * xi - 2.0 * nu;
        match b {
            NodalBasis::Mm => ((2.0 / 3.0 - i.sin().powi(2)) / 0.5021, 0.0),
            NodalBasis::Mf => (i.sin().powi(2) / 0.1578, -2.0 * xi),
            NodalBasis::O1 => (i.sin() * (i / 2.0).cos().powi(2) / 0.3800, 2.0 * xi - nu),
            NodalBasis::J1 => ((2.0 * i).sin() / 0.7214, -nu),
            NodalBasis::OO1 => (i.sin() * (i / 2.0).sin().powi(2) / 0.01640, -2.0 * xi - nu),
            NodalBasis::K1 => {
                let s2i = (2.0 * i).sin();
                let f = (0.8965 * s2i * s2i + 0.6001 * s2i * rad(nu).cos() + 0.1006).sqrt();
                (f, -self.nu_prime)
            }
            NodalBasis::M2 => (m2_f, m2_u),
            NodalBasis::K2 => {
                let si2 = i.sin().powi(2);
                let f = (19.0444 * si2 * si2 + 2.7702 * si2 * rad(2.0 * nu).cos() + 0.0981).sqrt();
                (f, -self.two_nu_pp)
            }
            NodalBasis::L2 => {
                let t2 = (i / 2.0).tan().powi(2);
                let two_p = rad(2.0 * self.big_p);
                let inv_ra = (1.0 - 12.0 * t2 * two_p.cos() + 36.0 * t2 * t2).sqrt();
                let r = two_p
                    .sin()
                    .atan2(1.0 / (6.0 * t2) - two_p.cos())
                    .to_degrees();
                (m2_f * inv_ra, m2_u - r)
            }
            NodalBasis::M3 => ((i / 2.0).cos().powi(6) / 0.8758, 3.0 * xi - 3.0 * nu),
        }
    }

    /// Nodal factor f and phase u (degrees) of a constituent.
    pub fn factor(&self, c: &Constituent) -> (f64, f64) {
        match c.nodal {
            Nodal::Solar => (1.0, 0.0),
            Nodal::Product(terms) => terms.iter().fold((1.0, 0.0), |(f, u), &(b, n)| {
                let (fb, ub) = self.basis(b);
                (f * fb.powi(i32::from(n).abs()), u + f64::from(n) * ub)
            }),
        }
    }
}
