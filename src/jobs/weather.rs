//! A path's weather figures for the link table and the probe: the gaseous loss, the fade
//! margin, the rain fade at the availability target and the availability (ITU-R P.676,
//! P.838-3, P.530; see [`crate::model::weather`]).

use crate::model::link::Geometry;
use crate::model::node::Node;
use crate::model::scenario::Scenario;
use crate::model::weather::rain::{Availability, Rain, RainCoefficients, RainPath};
use crate::model::weather::{InterfererFade, outage_together, rain_path_with, significant};

/// The figures of one received path.
#[derive(Debug, Clone, Copy)]
pub struct Figures {
    /// Gaseous loss on the path (part of its path loss), dB.
    pub gas_db: f64,
    /// How far the wanted path can fade before the SINR reaches the threshold, dB (none
    /// without a clear-air margin when interferers fade too).
    pub fade_margin_db: Option<f64>,
    /// Rain attenuation exceeded for 100 − target % of the time, dB (with `[rain]`).
    pub rain_fade_db: Option<f64>,
    /// Availability of the fade margin (with `[rain]`).
    pub availability: Option<Availability>,
}

/// A received path's weather figures as the link table and the probe report them (flattened
/// into their rows: the same names in links.csv, links.geojson and probe's JSON).
#[derive(Debug, Clone, Copy, serde::Serialize)]
pub struct Reported {
    /// Gaseous loss on the path (part of its path loss), dB.
    pub gas_db: f64,
    /// How far the wanted path can fade before the SINR reaches the threshold, dB (with
    /// interferers that do not fade, the SINR minus the threshold; none without a clear-air
    /// margin when interferers fade too).
    pub fade_margin_db: Option<f64>,
    /// Rain attenuation exceeded for 100 − target % of the time (ITU-R P.530), dB; none
    /// without `[rain]`.
    pub rain_fade_db: Option<f64>,
    /// Percentage of an average year above the threshold in rain (clamped to 99 to 99.999;
    /// see `availability_bound`); none without `[rain]`.
    pub availability_pct: Option<f64>,
    /// Minutes per average year below the threshold in rain.
    pub outage_min_per_year: Option<f64>,
    /// Whether `availability_pct` is a bound: `within`, `at_least` (99.999), `at_most` (99),
    /// `no_margin` (below the threshold without rain).
    pub availability_bound: Option<crate::model::weather::rain::Bound>,
}

impl Figures {
    /// The figures as reported, rounded for tables when `round` (0.01 dB, 1e-6 %, 0.1 min).
    pub fn reported(&self, round: bool) -> Reported {
        let r = |v: f64, dp: i32| if round { crate::model::units::round_dp(v, dp) } else { v };
        Reported {
            gas_db: r(self.gas_db, 2),
            fade_margin_db: self.fade_margin_db.map(|m| r(m, 2)),
            rain_fade_db: self.rain_fade_db.map(|v| r(v, 2)),
            availability_pct: self.availability.map(|a| r(a.pct, 6)),
            outage_min_per_year: self.availability.map(|a| r(a.outage_min_per_year, 1)),
            availability_bound: self.availability.map(|a| a.bound),
        }
    }
}

/// One transmitter's path to the receiver: the node, the receiver's latitude and the
/// geometry.
pub(crate) struct Path<'a> {
    pub(crate) tx: &'a Node,
    pub(crate) rx_lat: f64,
    pub(crate) geometry: &'a Geometry,
}

impl Path<'_> {
    /// P.838 coefficients for the transmitter's polarisation and the path's elevation, the
    /// latitude at the path's middle.
    fn rain(&self, sc: &Scenario, rain: &Rain, c: &RainCoefficients) -> RainPath {
        let g = self.geometry;
        let lat = 0.5 * (self.tx.lat + self.rx_lat);
        rain_path_with(
            rain,
            c,
            sc.pathloss_of(self.tx).frequency_ghz(),
            g.distance_m,
            g.east_m.hypot(g.north_m),
            self.tx.polarisation.cos_2tau(),
            lat,
        )
    }
}

/// The figures of `wanted` received at `s_mw` (mean, shadowed) beside `interferers` (paths
/// with their activity-weighted mean shadowed powers, mW) and noise `n_mw`, at mean SINR
/// `sinr_db`.
pub(crate) fn figures(
    sc: &Scenario,
    wanted: &Path,
    s_mw: f64,
    interferers: &[(Path, f64)],
    n_mw: f64,
    sinr_db: f64,
) -> Figures {
    let w = sc.weather();
    let thr = sc.thresholds.sinr_db;
    let gas_db = sc.pathloss_of(wanted.tx).absorption_db_per_km() * wanted.geometry.distance_m / 1000.0;
    let Some(rain) = w.rain else {
        return Figures { gas_db, fade_margin_db: Some(sinr_db - thr), rain_fade_db: None, availability: None };
    };
    let coefficients = RainCoefficients::at(sc.pathloss_of(wanted.tx).frequency_ghz());
    let wp = wanted.rain(sc, &rain, &coefficients);
    let (fade_margin_db, availability) = match w.interferers {
        InterfererFade::None => (Some(sinr_db - thr), wp.availability(sinr_db - thr)),
        InterfererFade::Together => {
            let powers: Vec<f64> = interferers.iter().map(|x| x.1).collect();
            let intf: Vec<(f64, RainPath)> = significant(&powers, n_mw)
                .into_iter()
                .map(|k| (interferers[k].1, interferers[k].0.rain(sc, &rain, &coefficients)))
                .collect();
            outage_together(&wp, s_mw, &intf, n_mw, thr)
        }
    };
    Figures {
        gas_db,
        fade_margin_db,
        rain_fade_db: Some(wp.fade_at_target_db(w.target_pct)),
        availability: Some(availability),
    }
}
