//! Obstruction of a path by the surface (ground and buildings) under the Earth's bulge: the
//! profile analysis in double precision that links, probe and the installer sheet use, and
//! that the map's sweep is measured against.
//!
//! Heights are metres above the elevation datum, distances horizontal metres from the
//! transmitting end. Each profile point is raised by the Earth bulge d₁·d₂/(2·k·a) so the
//! ray between the two antennas is straight.
//!
//! # References
//! - ITU-R P.526-16 §4.1, eqs. (26)–(31): knife-edge ν and its loss J(ν) (the approximation
//!   6.9 + 20 log(√((ν−0.1)²+1) + ν − 0.1) for ν > −0.78, and 0 below).
//! - ITU-R P.526-16 §2.1 / ITU-R P.530-18 §2.2.2: first Fresnel zone radius
//!   r₁ = √(λ d₁ d₂ / d); the 0.6 r₁ clearance rule (common practice).
//! - ITU-R P.530 / P.834: Earth bulge with the effective radius k·a, a = 6371 km, k = 4/3
//!   for the median refractivity gradient (common practice).
//! - J. Deygout, "Multiple knife-edge diffraction of microwaves", IEEE Trans. Antennas
//!   Propag. 14 (1966): the principal edge, then the strongest edge of each side path
//!   (three edges at most, no empirical correction, side edges only when the principal edge
//!   blocks the ray; from memory).

/// Mean Earth radius, m (ITU-R P.834; common practice).
pub const EARTH_RADIUS_M: f64 = 6_371_000.0;

/// Knife-edge diffraction loss J(ν), dB (ITU-R P.526-16 eq. 31; 0 for ν ≤ −0.78).
///
/// ```
/// use lobemap::model::obstruction::knife_edge_db;
/// assert!((knife_edge_db(0.0) - 6.03).abs() < 0.01);
/// assert_eq!(knife_edge_db(-1.0), 0.0);
/// ```
pub fn knife_edge_db(nu: f64) -> f64 {
    if nu <= -0.78 {
        0.0
    } else {
        let v = nu - 0.1;
        6.9 + 20.0 * ((v * v + 1.0).sqrt() + v).log10()
    }
}

/// First Fresnel zone radius at distances `d1_m` and `d2_m` from the two ends, m.
pub fn fresnel_radius_m(wavelength_m: f64, d1_m: f64, d2_m: f64) -> f64 {
    (wavelength_m * d1_m * d2_m / (d1_m + d2_m)).sqrt()
}

/// Earth bulge at distances `d1_m` and `d2_m` from the two ends under effective radius
/// factor `k`, m.
pub fn earth_bulge_m(d1_m: f64, d2_m: f64, k: f64) -> f64 {
    d1_m * d2_m / (2.0 * k * EARTH_RADIUS_M)
}

/// The diffraction parameter ν of an edge `h_m` above the ray (negative below it).
pub fn nu(h_m: f64, wavelength_m: f64, d1_m: f64, d2_m: f64) -> f64 {
    h_m * (2.0 * (d1_m + d2_m) / (wavelength_m * d1_m * d2_m)).sqrt()
}

/// Wavelength of a carrier, m.
pub fn wavelength_m(frequency_ghz: f64) -> f64 {
    crate::model::pathloss::SPEED_OF_LIGHT / (frequency_ghz * 1e9)
}

/// One sample of a path profile.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ProfilePoint {
    /// Horizontal distance from the transmitting end, m.
    pub distance_m: f64,
    /// Ground elevation, m.
    pub ground_m: f64,
    /// Top of the surface (ground plus any building), m.
    pub top_m: f64,
    /// Index of the building at this point, if any.
    pub building: Option<u32>,
}

/// A path profile between two antennas.
#[derive(Debug, Clone, PartialEq)]
pub struct Profile {
    /// Horizontal length, m.
    pub length_m: f64,
    /// Transmitting antenna's altitude, m.
    pub tx_alt_m: f64,
    /// Receiving antenna's altitude, m.
    pub rx_alt_m: f64,
    /// Interior samples, in order of distance (ends excluded).
    pub points: Vec<ProfilePoint>,
}

/// What limits a path most: the point of least clearance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Limit {
    /// Horizontal distance from the transmitting end, m.
    pub distance_m: f64,
    /// Index of the building there, or `None` for the ground.
    pub building: Option<u32>,
    /// ν of that point.
    pub nu: f64,
}

/// The obstruction of one path.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Obstruction {
    /// Whether the straight ray clears every point.
    pub line_of_sight: bool,
    /// Least clearance over the first Fresnel zone radius (negative when the ray is blocked;
    /// +∞ for a path with no interior point).
    pub clearance_f1: f64,
    /// Loss, dB: the knife-edge loss of the principal edge, plus the side paths' edges when
    /// three edges are used, capped.
    pub loss_db: f64,
    /// The point of least clearance.
    pub limit: Option<Limit>,
}

impl Obstruction {
    /// No obstruction (no surface model).
    pub const CLEAR: Obstruction =
        Obstruction { line_of_sight: true, clearance_f1: f64::INFINITY, loss_db: 0.0, limit: None };
}

/// How many knife edges a path's loss counts.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Edges {
    /// The principal (largest ν) edge only: the map's model.
    One,
    /// Deygout's construction with up to three edges: links and probe.
    Three,
}

/// The largest ν over points `lo..hi` of the ray from (`da`, `za`) to (`db`, `zb`), with each
/// point's top raised by the bulge of the whole path (the bulge is a property of the point).
fn max_nu(
    pts: &[(f64, f64)],
    lo: usize,
    hi: usize,
    ends: ((f64, f64), (f64, f64)),
    lambda: f64,
) -> Option<(usize, f64)> {
    let ((da, za), (db, zb)) = ends;
    let mut best: Option<(usize, f64)> = None;
    for (i, &(d, z)) in pts.iter().enumerate().take(hi).skip(lo) {
        let (d1, d2) = (d - da, db - d);
        if d1 <= 0.0 || d2 <= 0.0 {
            continue;
        }
        let ray = za + (zb - za) * d1 / (db - da);
        let v = nu(z - ray, lambda, d1, d2);
        if best.is_none_or(|(_, b)| v > b) {
            best = Some((i, v));
        }
    }
    best
}

/// Analyses `profile` at `wavelength_m` under Earth radius factor `k`; the loss is capped at
/// `cap_db`.
pub fn analyse(profile: &Profile, wavelength_m: f64, k: f64, cap_db: f64, edges: Edges) -> Obstruction {
    let d = profile.length_m;
    // Tops raised by the bulge.
    let pts: Vec<(f64, f64)> = profile
        .points
        .iter()
        .map(|p| (p.distance_m, p.top_m + earth_bulge_m(p.distance_m, d - p.distance_m, k)))
        .collect();
    let ends = ((0.0, profile.tx_alt_m), (d, profile.rx_alt_m));
    let Some((ip, vp)) = max_nu(&pts, 0, pts.len(), ends, wavelength_m) else {
        return Obstruction::CLEAR;
    };
    let p = &profile.points[ip];
    let mut loss = knife_edge_db(vp);
    // Side paths only behind an edge that blocks the ray: under a clear ray the points
    // beside the least-clearance one (a roof under the ray, say) would count as grazing edges.
    if edges == Edges::Three && vp > 0.0 {
        let edge = pts[ip];
        if let Some((_, vt)) = max_nu(&pts, 0, ip, (ends.0, edge), wavelength_m) {
            loss += knife_edge_db(vt);
        }
        if let Some((_, vr)) = max_nu(&pts, ip + 1, pts.len(), (edge, ends.1), wavelength_m) {
            loss += knife_edge_db(vr);
        }
    }
    Obstruction {
        line_of_sight: vp < 0.0,
        clearance_f1: -vp / std::f64::consts::SQRT_2,
        loss_db: loss.min(cap_db),
        limit: Some(Limit { distance_m: p.distance_m, building: p.building, nu: vp }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(d: f64, top: f64) -> ProfilePoint {
        ProfilePoint { distance_m: d, ground_m: 0.0, top_m: top, building: None }
    }

    #[test]
    fn knife_edge_matches_the_fresnel_integral_loss() {
        // Reference: the exact knife-edge loss J(ν) = −20 log10(√((1 − C − S)² + (C − S)²)/2),
        // C and S the Fresnel integrals (ITU-R P.526-16 eqs. 27–30), computed with scipy 1.17.1
        // `scipy.special.fresnel` (defined with πt²/2, as P.526's). P.526 gives eq. 31 as an
        // approximation of that curve for ν > −0.78; here it is within 0.13 dB of it.
        let exact = [
            (-0.7, 0.4659),
            (-0.5, 1.8586),
            (0.0, 6.0206),
            (0.5, 10.2338),
            (1.0, 13.8641),
            (2.0, 19.0910),
            (3.0, 22.5218),
            (5.0, 26.9362),
        ];
        for (v, j) in exact {
            let got = knife_edge_db(v);
            assert!((got - j).abs() < 0.13, "J({v}) = {got}, exact {j}");
        }
        // P.526's own figure reads 6 dB at ν = 0 (grazing) and about 13.9 dB at ν = 1.
        assert!((knife_edge_db(0.0) - 6.03).abs() < 0.01);
        assert!((knife_edge_db(1.0) - 13.93).abs() < 0.01);
    }

    #[test]
    fn fresnel_radius_and_bulge_follow_the_p530_forms() {
        // ITU-R P.530-18 eq. (2): r1 = 17.3 √(d1 d2 / (f d)) m with d in km and f in GHz
        // (17.32 = √(c/1e9 · 1e3) ). At 60 GHz mid-path of 1 km: 17.32 · √(0.25/60) = 1.118 m.
        let r = fresnel_radius_m(wavelength_m(60.0), 500.0, 500.0);
        assert!((r - 17.3205 * (0.25f64 / 60.0).sqrt()).abs() < 1e-3, "r1 = {r}");
        // Bulge d1 d2 / (12.74 k) m with d in km (the usual practical form of d1 d2 / (2 k a),
        // 2 · 6.371 = 12.742; common practice): 10 km + 10 km at k = 4/3 is 5.886 m.
        let h = earth_bulge_m(10_000.0, 10_000.0, 4.0 / 3.0);
        assert!((h - 100.0 / (12.742 * 4.0 / 3.0)).abs() < 1e-3, "bulge = {h}");
    }

    #[test]
    fn a_two_edge_profile_worked_by_hand() {
        // Worked by hand (Deygout 1966 construction; P.526 eq. 26 for ν, eq. 31 for J):
        // 28 GHz (λ = 0.0107069 m), a 1 km flat path with both antennas at 10 m, k = ∞
        // (no bulge: k = 1e12), edges of 14 m at 300 m and 12 m at 700 m.
        // Principal edge: at 300 m, h = 4, ν = 4·√(2·1000/(λ·300·700)) = 3.77254; at 700 m,
        // h = 2, ν = 2·√(2000/(λ·700·300)) = 1.88627; principal is the first. Side path to the
        // receiver: the ray from (300, 14) to (1000, 10) is 14 − 4·400/700 = 11.71429 m at
        // 700 m, so h = 0.28571 and ν = 0.28571·√(2·700/(λ·400·300)) = 0.29825. No point lies
        // before the principal edge. J(3.77254) = 6.9 + 20 log10(√(3.67254² + 1) + 3.67254)
        // = 24.37663; J(0.29825) = 8.61086 (the arithmetic checked with Python's math module).
        let lambda = wavelength_m(28.0);
        assert!((lambda - 0.010_706_9).abs() < 1e-6);
        let prof = Profile {
            length_m: 1000.0,
            tx_alt_m: 10.0,
            rx_alt_m: 10.0,
            points: vec![point(300.0, 14.0), point(700.0, 12.0)],
        };
        let one = analyse(&prof, lambda, 1e12, 100.0, Edges::One);
        assert!(!one.line_of_sight);
        let lim = one.limit.unwrap();
        assert_eq!(lim.distance_m, 300.0);
        assert!((lim.nu - 3.77254).abs() < 1e-4, "ν = {}", lim.nu);
        assert!((one.loss_db - 24.37663).abs() < 1e-4, "J = {}", one.loss_db);
        let three = analyse(&prof, lambda, 1e12, 100.0, Edges::Three);
        assert!((three.loss_db - (24.37663 + 8.61086)).abs() < 1e-4, "L = {}", three.loss_db);
        assert!((three.clearance_f1 + 3.77254 / 2f64.sqrt()).abs() < 1e-4);
        // The cap.
        assert_eq!(analyse(&prof, lambda, 1e12, 20.0, Edges::Three).loss_db, 20.0);
    }

    #[test]
    fn a_clear_path_has_clearance_and_the_bulge_can_close_it() {
        // 60 GHz, 2 km, antennas at 10 m over flat ground at 0 m with one 8 m point mid-path.
        // Without bulge the clearance is 2 m over r1 = √(λ·1000·1000/2000) = 0.05000 m → 40.
        // With k = 4/3 the point rises by 1000·1000/(2·4/3·6.371e6) = 0.05886 m.
        let lambda = wavelength_m(60.0);
        let prof = Profile { length_m: 2000.0, tx_alt_m: 10.0, rx_alt_m: 10.0, points: vec![point(1000.0, 8.0)] };
        let flat = analyse(&prof, lambda, 1e12, 40.0, Edges::One);
        let r1 = fresnel_radius_m(lambda, 1000.0, 1000.0);
        assert!(flat.line_of_sight && (flat.clearance_f1 - 2.0 / r1).abs() < 1e-6);
        assert_eq!(flat.loss_db, 0.0);
        let curved = analyse(&prof, lambda, 4.0 / 3.0, 40.0, Edges::One);
        assert!((curved.clearance_f1 - (2.0 - 0.058_86) / r1).abs() < 1e-3, "{}", curved.clearance_f1);
    }
}
