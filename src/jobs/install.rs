//! Installer sheet: per node, where to mount, where to point (true and magnetic), how far to
//! tilt toward its peer, what level to expect at the peer when aligned, and how far to stay
//! out of the beam (RF exposure keep-out).
//!
//! # References
//! - NOAA NCEI / BGS World Magnetic Model WMM2025 (declination), through the
//!   `world_magnetic_model` crate.
//! - Far-field power density S = EIRP / (4π d²) (e.g. FCC OET Bulletin 65), so the keep-out
//!   distance is d = √(EIRP / (4π S_lim)).
//! - Reference levels for the general public: 10 W/m² for 2–300 GHz (ICNIRP 2020 guidelines,
//!   whole-body average; from memory), f/200 W/m² with f in MHz for 400–2000 MHz (ICNIRP 2020;
//!   from memory), 2 W/m² below 400 MHz (ICNIRP 2020, 10–400 MHz; from memory). The US limit
//!   for the general population is the same 1 mW/cm² = 10 W/m² for 1.5–100 GHz
//!   (47 CFR 1.1310, confirmed; docs/reference-values.md).

use crate::jobs::links::angle_diff;
use crate::jobs::links::link_azimuths;
use crate::model::link::{Budget, Geometry};
use crate::model::obstruction::{EARTH_RADIUS_M, Edges};
use crate::model::scenario::Scenario;
use serde::Serialize;
use world_magnetic_model::GeomagneticField;
use world_magnetic_model::time::Date;
use world_magnetic_model::uom::si::angle::degree;
use world_magnetic_model::uom::si::f32::{Angle, Length};
use world_magnetic_model::uom::si::length::meter;

/// The general-public power-density reference level at a frequency: (W/m², its name).
pub fn reference_level(frequency_ghz: f64) -> (f64, &'static str) {
    let f_mhz = frequency_ghz * 1000.0;
    if f_mhz >= 2000.0 {
        (10.0, "ICNIRP 2020 general public, 2-300 GHz: 10 W/m2 (US 47 CFR 1.1310: 1 mW/cm2, 1.5-100 GHz)")
    } else if f_mhz >= 400.0 {
        (f_mhz / 200.0, "ICNIRP 2020 general public, 400-2000 MHz: f/200 W/m2")
    } else {
        (2.0, "ICNIRP 2020 general public, 10-400 MHz: 2 W/m2")
    }
}

/// Far-field distance at which EIRP / (4π d²) falls to `limit_w_m2`, m.
pub fn keepout_m(eirp_dbm: f64, limit_w_m2: f64) -> f64 {
    let eirp_w = 10f64.powf((eirp_dbm - 30.0) / 10.0);
    (eirp_w / (4.0 * std::f64::consts::PI * limit_w_m2)).sqrt()
}

/// Magnetic declination (degrees, east positive) at a place and date (year, day of year).
pub fn declination_deg(lat: f64, lon: f64, height_m: f64, date: (i32, u16)) -> Result<f64, String> {
    let d = Date::from_ordinal_date(date.0, date.1).map_err(|e| e.to_string())?;
    let f = GeomagneticField::new(
        Length::new::<meter>(height_m as f32),
        Angle::new::<degree>(lat as f32),
        Angle::new::<degree>(lon as f32),
        d,
    )
    .map_err(|e| e.to_string())?;
    Ok(f.declination().get::<degree>() as f64)
}

/// One node's installer row.
#[derive(Debug, Clone, Serialize)]
pub struct InstallRow {
    /// Node id.
    pub id: String,
    /// Name, if any.
    pub name: String,
    /// Latitude, degrees.
    pub lat: f64,
    /// Longitude, degrees.
    pub lon: f64,
    /// Mounting height, m.
    pub height_m: f64,
    /// Channel to set (its name) and its centre frequency, GHz.
    pub channel: String,
    /// Centre frequency of that channel, GHz.
    pub centre_ghz: f64,
    /// Polarisation to set, `V` or `H`.
    pub polarisation: String,
    /// Boresight to set, degrees from true north: the geodesic azimuth to the peer, or the
    /// planned azimuth for a node without one.
    pub azimuth_true_deg: f64,
    /// Boresight in the node file, degrees from true north.
    pub azimuth_planned_deg: f64,
    /// Whether the azimuth to set differs from the planned one by enough to matter: a tenth of
    /// half the beamwidth (about 0.03 dB on a parabolic main lobe), and at least 0.1°, the
    /// sheet's precision ([`realign_threshold_deg`]).
    pub differs_from_plan: bool,
    /// Magnetic declination used, degrees east.
    pub declination_deg: f64,
    /// Boresight, degrees from magnetic north (compass reading).
    pub azimuth_magnetic_deg: f64,
    /// Peer id.
    pub peer: String,
    /// Mechanical down-tilt toward the peer from the two heights, degrees (negative: up-tilt).
    pub downtilt_deg: Option<f64>,
    /// Expected level at the peer with both ends set to their azimuths to set, dBm.
    pub expected_at_peer_dbm: Option<f64>,
    /// EIRP on boresight, dBm.
    pub eirp_dbm: f64,
    /// Keep-out distance in front of the antenna, m.
    pub keepout_m: f64,
}

/// The sheet plus the reference level it used.
#[derive(Debug, Clone, Serialize)]
pub struct InstallSheet {
    /// Rows in node order.
    pub rows: Vec<InstallRow>,
    /// Reference level, W/m².
    pub limit_w_m2: f64,
    /// Which limit and frequency range.
    pub limit_name: String,
    /// Declination date, ISO.
    pub declination_date: String,
}

/// Smallest difference between the planned azimuth and the azimuth to set that the sheet
/// marks, degrees: a tenth of half the beamwidth (a pointing error that costs about
/// 12·(0.05)² = 0.03 dB on the TR 38.901 parabolic cut; common practice for alignment
/// tolerance), and never below the 0.1° the sheet prints.
pub fn realign_threshold_deg(p: &crate::model::antenna::Pattern) -> f64 {
    (p.beamwidth_deg() / 20.0).max(0.1)
}

/// Builds the sheet; fails only if the magnetic model rejects a place or date.
pub fn sheet(sc: &Scenario) -> Result<InstallSheet, String> {
    let (limit, name) = reference_level(sc.pathloss.frequency_ghz());
    let date = sc.install.declination_date;
    let index: std::collections::HashMap<&str, usize> =
        sc.nodes.iter().enumerate().map(|(i, n)| (n.id.as_str(), i)).collect();
    let mut rows = Vec::with_capacity(sc.nodes.len());
    for n in &sc.nodes {
        let decl = declination_deg(n.lat, n.lon, n.height_m, date)?;
        let peer = n.peer.as_deref().and_then(|p| index.get(p)).map(|&j| &sc.nodes[j]);
        // With a peer, the azimuth to set is the geodesic azimuth to it (the link table's
        // "should"); tilt and expected level are for both ends set that way.
        let (set_deg, tilt, expected) = match peer {
            Some(p) => {
                let (to_peer, _) = link_azimuths(n, p);
                let (e0, e1) = (sc.node_end(n), sc.node_end(p));
                let g = Geometry::between(&e0, &e1);
                let horiz = g.east_m.hypot(g.north_m);
                // Over a surface the ends' altitudes differ by the ground too, and the Earth
                // drops by d/(2·k·a) radians of apparent elevation (common practice).
                let drop = sc.surface().map_or(0.0, |s| horiz / (2.0 * s.earth_k() * EARTH_RADIUS_M));
                let tilt = (e0.height_m - e1.height_m).atan2(horiz).to_degrees() + drop.to_degrees();
                let obs = sc.node_to_node(n, p, Edges::Three);
                let level = Budget::aligned(sc.pathloss_of(n), n, g)
                    .obstructed(obs.loss_db)
                    .received_dbm(p.pattern.max_gain_dbi());
                (to_peer, Some((tilt * 100.0).round() / 100.0), Some((level * 100.0).round() / 100.0))
            }
            None => (n.azimuth_deg, None, None),
        };
        let round1 = |x: f64| (x * 10.0).round() / 10.0 % 360.0;
        rows.push(InstallRow {
            id: n.id.clone(),
            name: n.name.clone().unwrap_or_default(),
            channel: sc.spectrum.channels[n.channel].name.clone(),
            centre_ghz: sc.spectrum.channels[n.channel].centre_ghz,
            polarisation: n.polarisation.name().into(),
            lat: n.lat,
            lon: n.lon,
            height_m: n.height_m,
            azimuth_true_deg: round1(set_deg),
            azimuth_planned_deg: round1(n.azimuth_deg),
            differs_from_plan: angle_diff(set_deg, n.azimuth_deg).abs() >= realign_threshold_deg(&n.pattern),
            declination_deg: (decl * 100.0).round() / 100.0,
            azimuth_magnetic_deg: round1(angle_diff(set_deg, decl).rem_euclid(360.0)),
            peer: n.peer.clone().unwrap_or_default(),
            downtilt_deg: tilt,
            expected_at_peer_dbm: expected,
            eirp_dbm: (n.eirp_dbm() * 100.0).round() / 100.0,
            keepout_m: (keepout_m(n.eirp_dbm(), limit) * 1000.0).round() / 1000.0,
        });
    }
    Ok(InstallSheet {
        rows,
        limit_w_m2: limit,
        limit_name: name.to_string(),
        declination_date: {
            let d = Date::from_ordinal_date(date.0, date.1).map_err(|e| e.to_string())?;
            format!("{:04}-{:02}-{:02}", d.year(), u8::from(d.month()), d.day())
        },
    })
}

/// CSV of the sheet, with the limit named in a comment line first.
pub fn csv(s: &InstallSheet) -> String {
    const HEADER: &[&str] = &[
        "id",
        "name",
        "lat_deg",
        "lon_deg",
        "height_m",
        "channel",
        "centre_ghz",
        "polarisation",
        "azimuth_true_deg",
        "azimuth_planned_deg",
        "differs_from_plan",
        "declination_deg",
        "azimuth_magnetic_deg",
        "peer",
        "downtilt_deg",
        "expected_at_peer_dbm",
        "eirp_dbm",
        "keepout_m",
    ];
    let rows = s.rows.iter().map(|r| {
        vec![
            r.id.clone(),
            r.name.clone(),
            format!("{:.7}", r.lat),
            format!("{:.7}", r.lon),
            r.height_m.to_string(),
            r.channel.to_string(),
            r.centre_ghz.to_string(),
            r.polarisation.to_string(),
            r.azimuth_true_deg.to_string(),
            r.azimuth_planned_deg.to_string(),
            r.differs_from_plan.to_string(),
            r.declination_deg.to_string(),
            r.azimuth_magnetic_deg.to_string(),
            r.peer.to_string(),
            r.downtilt_deg.map(|v| v.to_string()).unwrap_or_default(),
            r.expected_at_peer_dbm.map(|v| v.to_string()).unwrap_or_default(),
            r.eirp_dbm.to_string(),
            r.keepout_m.to_string(),
        ]
    });
    crate::io::tables::csv_text(HEADER, rows)
}

/// What `install.csv` leaves to its sidecar `install.json`: how the keep-out and the
/// magnetic azimuth were found, and the cautions that go with every row.
pub fn sidecar(s: &InstallSheet) -> serde_json::Value {
    serde_json::json!({
        "file": "install.csv",
        "keepout": "far-field distance where EIRP/(4 pi d^2) falls to the reference level",
        "reference_level_w_m2": s.limit_w_m2,
        "reference_level": s.limit_name,
        "magnetic_azimuth": "true azimuth - declination (World Magnetic Model)",
        "declination_date": s.declination_date,
        "cautions": CAUTIONS,
    })
}

/// The cautions every installer output carries.
pub const CAUTIONS: &[&str] = &[
    "Keep-out distances are far-field estimates for the main beam only: follow local RF exposure rules and the equipment maker's figures.",
    "Work at height only with training, fall protection and a second person, under local rules.",
    "Transmit power, channel and antenna must stay within the licence or the local licence-exempt limits.",
];

#[cfg(test)]
mod tests {
    use super::*;

    // Hand calculation: EIRP 40 dBm = 10 W; d = √(10 / (4π·10)) = 0.2821 m; 60 dBm = 1000 W
    // gives 2.821 m (docs/reference-values.md).
    #[test]
    fn keepout_hand_calculation() {
        assert!((keepout_m(40.0, 10.0) - 0.28209).abs() < 1e-4);
        assert!((keepout_m(60.0, 10.0) - 2.82095).abs() < 1e-4);
        assert_eq!(reference_level(60.0).0, 10.0);
        assert!((reference_level(0.9).0 - 4.5).abs() < 1e-12);
    }

    // WMM2025 declination against an independent implementation: pygeomag 1.1.0 with the
    // WMM_2025.COF coefficients (computed on 2026-12-01 and pasted here). Tolerance 0.05°:
    // the crate evaluates in float32.
    #[test]
    fn declination_against_pygeomag() {
        for (lat, lon, date, want) in [
            (45.5, -4.8, (2026, 1), 0.034433402755151776),
            (-33.9, 151.2, (2027, 182), 12.851907412833778),
            (64.1, -21.9, (2025, 182), -11.39410196516562),
            (0.0, 0.0, (2028, 1), -3.6456009087187002),
            (40.0, -105.0, (2026, 329), 7.5145180592024685),
        ] {
            let got = declination_deg(lat, lon, 0.0, date).unwrap();
            assert!((got - want).abs() < 0.05, "{lat},{lon} {date:?}: {got} vs {want}");
        }
    }

    #[test]
    fn declination_outside_model_validity_is_an_error() {
        assert!(declination_deg(45.0, 7.0, 0.0, (2031, 1)).is_err());
    }
}
