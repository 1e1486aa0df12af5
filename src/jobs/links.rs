//! Planned links: every node with a `peer` forms a link from it to its peer. For each link:
//! geometry, misalignment of both ends, received signal, aggregate interference at the
//! receiving end (its own antenna as installed), mean SINR, coverage probability with fading,
//! margin, a Shannon capacity estimate with an implementation gap, and the strongest
//! interferers.
//!
//! # References
//! - C. E. Shannon, "A mathematical theory of communication", 1948: C = B log2(1 + SNR); the
//!   gap Γ (dB) between this bound and a practical modem is common practice (e.g. Cioffi's
//!   SNR-gap approximation).

use crate::geometry::frame::geodesic_azimuth_deg;
use crate::jobs::probe::McCheck;
use crate::jobs::weather;
use crate::model::coverage::CoverageModel;
use crate::model::link::{Budget, Endpoint, Geometry, gain_toward};
use crate::model::node::Node;
use crate::model::obstruction::Edges;
use crate::model::scenario::Scenario;
use crate::model::units::{db_to_lin, dbm_to_mw, mw_to_dbm, round_dp};
use crate::model::weather::rain::{Bound, Rain};
use rayon::prelude::*;
use serde::Serialize;

/// One interferer's share of a link's interference.
#[derive(Debug, Clone, Serialize)]
pub struct Share {
    /// Node id.
    pub id: String,
    /// Activity-weighted mean power at the receiver, dBm.
    pub power_dbm: f64,
    /// Fraction of the link's aggregate interference.
    pub share: f64,
}

/// One planned link (from → to).
#[derive(Debug, Clone, Serialize)]
pub struct LinkRow {
    /// Transmitting node.
    pub from: String,
    /// Receiving node.
    pub to: String,
    /// 3-D distance between the antennas, m.
    pub length_m: f64,
    /// Bearing from `from` to `to`, degrees from true north.
    pub bearing_deg: f64,
    /// `from`'s boresight minus the bearing to `to`, degrees in (−180, 180].
    pub misalign_from_deg: f64,
    /// `to`'s boresight minus the bearing to `from`, degrees in (−180, 180].
    pub misalign_to_deg: f64,
    /// Whether `from` is misaligned beyond half its beamwidth.
    pub misaligned_from: bool,
    /// Whether `to` is misaligned beyond half its beamwidth.
    pub misaligned_to: bool,
    /// Azimuth `from` should have, degrees.
    pub azimuth_from_should_deg: f64,
    /// Azimuth `to` should have, degrees.
    pub azimuth_to_should_deg: f64,
    /// Transmit gain toward the peer as installed, dBi.
    pub tx_gain_dbi: f64,
    /// Receive gain toward the peer as installed, dBi.
    pub rx_gain_dbi: f64,
    /// Path loss, dB.
    pub path_loss_db: f64,
    /// Mean received signal, dBm.
    pub signal_dbm: f64,
    /// Activity-weighted aggregate interference at `to`, dBm (None: no interferer).
    pub interference_dbm: Option<f64>,
    /// Noise, dBm.
    pub noise_dbm: f64,
    /// Mean SINR, dB.
    pub sinr_db: f64,
    /// P\[SINR ≥ T\] with fading.
    pub coverage: f64,
    /// Mean SINR minus the threshold, dB.
    pub margin_db: f64,
    /// Shannon estimate B log2(1 + SINR/Γ), capped at the maximum spectral efficiency, Mbit/s.
    pub capacity_mbps: f64,
    /// The three strongest interferers.
    pub top_interferers: Vec<Share>,
    /// SINR ≥ threshold and coverage ≥ target.
    pub passes: bool,
    /// Whether the straight ray between the antennas clears the surface.
    pub line_of_sight: bool,
    /// Least clearance over the first Fresnel zone radius (negative when the ray is blocked);
    /// none without a surface or interior point.
    pub clearance_f1: Option<f64>,
    /// Whether the clearance meets the 60 % rule ([`CLEARANCE_RULE`]).
    pub clearance_ok: bool,
    /// Obstruction (diffraction) loss on the link, dB.
    pub obstruction_db: f64,
    /// What limits the clearance: a building's label or "ground at N m" (from the `from` end).
    pub limited_by: Option<String>,
    /// The link's channel (both ends on it).
    pub channel: String,
    /// The link's polarisation (both ends), `V` or `H`.
    pub polarisation: String,
    /// Gas, fade margin, rain fade at the target, availability and outage.
    #[serde(flatten)]
    pub weather: weather::Reported,
    /// Availability at or above the scenario's target.
    pub meets_target: Option<bool>,
    /// Monte Carlo check of `coverage`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub monte_carlo: Option<McCheck>,
}

/// Geodesic azimuths of the link a → b: (at a toward b, at b toward a), degrees from true north
/// at each end (Karney 2013).
pub fn link_azimuths(a: &Node, b: &Node) -> (f64, f64) {
    (geodesic_azimuth_deg(a.lon, a.lat, b.lon, b.lat), geodesic_azimuth_deg(b.lon, b.lat, a.lon, a.lat))
}

/// Signed difference a − b folded into (−180, 180].
pub fn angle_diff(a: f64, b: f64) -> f64 {
    let d = (a - b).rem_euclid(360.0);
    if d > 180.0 { d - 360.0 } else { d }
}

/// Least clearance over the first Fresnel zone radius a link needs: 0.6 (common practice;
/// ITU-R P.530 gives clearance criteria of this kind for line-of-sight links).
pub const CLEARANCE_RULE: f64 = 0.6;

/// Computes every planned link, in node order; `mc` = (trials, seed) adds Monte Carlo checks.
pub fn links(sc: &Scenario, mc: Option<(usize, u64)>) -> Vec<LinkRow> {
    let pos: Vec<Endpoint> = sc.nodes.iter().map(|n| sc.node_end(n)).collect();
    let pairs = crate::model::node::peer_pairs(&sc.nodes);
    let bar = crate::progress::bar("links", pairs.len() as u64, "links");
    let rows = pairs
        .par_iter()
        .enumerate()
        .map(|(k, &(f, t))| {
            let (a, b) = (&sc.nodes[f], &sc.nodes[t]);
            let link_mc = mc.map(|(n, seed)| (n, seed.wrapping_add(k as u64)));
            // The receiving end's noise on its channel.
            let noise_dbm = sc.noise_dbm_of(b);
            let cov = sc.coverage_model(noise_dbm);
            let row = one(sc, &pos, f, t, a, b, &cov, noise_dbm, link_mc);
            bar.inc(1);
            row
        })
        .collect();
    bar.finish_and_clear();
    rows
}

#[allow(clippy::too_many_arguments)]
fn one(
    sc: &Scenario,
    pos: &[Endpoint],
    f: usize,
    t: usize,
    a: &Node,
    b: &Node,
    cov: &CoverageModel,
    noise_dbm: f64,
    mc: Option<(usize, u64)>,
) -> LinkRow {
    // The link's own bearings are geodesic azimuths from true north at each end (Karney),
    // so the azimuth to set is right on long links far from the grid centre.
    let (brg, back) = link_azimuths(a, b);
    let path = Geometry::between(&pos[f], &pos[t]).with_bearings(brg, back);
    let obs = sc.node_to_node(a, b, Edges::Three);
    let link = Budget::new(sc.pathloss_of(a), a, path).obstructed(obs.loss_db);
    let length_m = link.geometry.distance_m;
    let mis_a = angle_diff(a.azimuth_deg, brg);
    let mis_b = angle_diff(b.azimuth_deg, back);
    let tx_gain = link.tx_gain_dbi;
    let rx_gain = gain_toward(b, back);
    let pl = link.path_loss_db;
    let signal_dbm = link.received_dbm(rx_gain);
    // Interference at b from every other node, b's antenna as installed.
    let mut contrib: Vec<(usize, f64, f64)> = Vec::new(); // (node, activity, mean power mW)
    let mut geoms: Vec<Geometry> = Vec::new();
    for (i, n) in sc.nodes.iter().enumerate() {
        if i == f || i == t {
            continue;
        }
        let path = Budget::new(sc.pathloss_of(n), n, Geometry::between(&pos[i], &pos[t]))
            .obstructed(sc.node_to_node(n, b, Edges::Three).loss_db);
        let g_rx = gain_toward(b, path.geometry.bearing_from_rx_deg);
        // What reaches b's receiver on b's channel and polarisation.
        contrib.push((i, n.activity, dbm_to_mw(path.received_dbm(g_rx)) * sc.coupling(n, b)));
        geoms.push(path.geometry);
    }
    let i_mw: f64 = contrib.iter().map(|c| c.1 * c.2).sum();
    let s_mw = dbm_to_mw(signal_dbm);
    let n_mw = dbm_to_mw(noise_dbm);
    // Reported levels are means of the shadowed powers (E[10^(X/10)] times the unshadowed
    // ones); the coverage model takes the unshadowed ones and draws the shadowing itself.
    let shadow = sc.fading.shadow_mean();
    let shadow_db = crate::model::units::lin_to_db(shadow);
    let sinr = s_mw * shadow / (i_mw * shadow + n_mw);
    let sinr_db = mw_to_dbm(sinr);
    let interferers: Vec<(f64, f64)> = contrib.iter().map(|c| (c.1, c.2)).collect();
    let coverage = cov.probability(s_mw, &interferers);
    contrib.sort_by(|x, y| (y.1 * y.2).total_cmp(&(x.1 * x.2)).then(x.0.cmp(&y.0)));
    let top_interferers = contrib
        .iter()
        .take(3)
        .filter(|c| c.1 * c.2 > 0.0)
        .map(|c| Share {
            id: sc.nodes[c.0].id.clone(),
            power_dbm: round_dp(mw_to_dbm(c.1 * c.2) + shadow_db, 2),
            share: round_dp(c.1 * c.2 / i_mw, 4),
        })
        .collect();
    let bw_hz = sc.spectrum.channels[a.channel].bandwidth_mhz * 1e6;
    let se = (1.0 + sinr / db_to_lin(sc.links.capacity_gap_db)).log2().min(sc.links.max_spectral_efficiency);
    let margin_db = sinr_db - sc.thresholds.sinr_db;
    let wanted = weather::Path { tx: a, rx_lat: b.lat, geometry: &link.geometry };
    let intf: Vec<(weather::Path, f64)> = contrib
        .iter()
        .zip(&geoms)
        .map(|(c, g)| (weather::Path { tx: &sc.nodes[c.0], rx_lat: b.lat, geometry: g }, c.1 * c.2 * shadow))
        .collect();
    let wx = weather::figures(sc, &wanted, s_mw * shadow, &intf, n_mw, sinr_db);
    let target_pct = sc.weather().target_pct;
    let monte_carlo = mc.map(|(trials, seed)| {
        let (estimate, low, high) = cov.monte_carlo(s_mw, &interferers, trials, seed);
        McCheck { trials, seed, estimate, low, high }
    });
    LinkRow {
        from: a.id.clone(),
        to: b.id.clone(),
        length_m: round_dp(length_m, 2),
        bearing_deg: round_dp(brg, 2),
        misalign_from_deg: round_dp(mis_a, 2),
        misalign_to_deg: round_dp(mis_b, 2),
        misaligned_from: !a.pattern.is_omni() && mis_a.abs() > a.pattern.beamwidth_deg() / 2.0,
        misaligned_to: !b.pattern.is_omni() && mis_b.abs() > b.pattern.beamwidth_deg() / 2.0,
        azimuth_from_should_deg: round_dp(brg, 2),
        azimuth_to_should_deg: round_dp(back, 2),
        tx_gain_dbi: round_dp(tx_gain, 2),
        rx_gain_dbi: round_dp(rx_gain, 2),
        path_loss_db: round_dp(pl, 2),
        signal_dbm: round_dp(signal_dbm + shadow_db, 2),
        interference_dbm: (i_mw > 0.0).then(|| round_dp(mw_to_dbm(i_mw) + shadow_db, 2)),
        noise_dbm: round_dp(noise_dbm, 2),
        sinr_db: round_dp(sinr_db, 2),
        coverage: round_dp(coverage, 4),
        margin_db: round_dp(margin_db, 2),
        capacity_mbps: round_dp(bw_hz * se / 1e6, 1),
        top_interferers,
        passes: sinr_db >= sc.thresholds.sinr_db && coverage >= sc.thresholds.coverage_target,
        line_of_sight: obs.line_of_sight,
        clearance_f1: obs.clearance_f1.is_finite().then(|| round_dp(obs.clearance_f1, 3)),
        clearance_ok: obs.clearance_f1 >= CLEARANCE_RULE,
        obstruction_db: round_dp(obs.loss_db, 2),
        limited_by: obs.limit.and_then(|l| sc.surface().map(|s| s.describe(&l))),
        channel: sc.spectrum.channels[a.channel].name.clone(),
        polarisation: a.polarisation.name().into(),
        weather: wx.reported(true),
        meets_target: wx.availability.map(|a| a.pct >= target_pct),
        monte_carlo,
    }
}

impl LinkRow {
    /// How the path reads: clear, clear but short of the 60 % rule, or blocked, with what
    /// limits it and the obstruction loss.
    pub fn path_verdict(&self) -> String {
        let what = self.limited_by.as_deref().unwrap_or("the surface");
        match (self.line_of_sight, self.clearance_f1) {
            (false, _) => format!("blocked by {what}, {:.1} dB", self.obstruction_db),
            (true, Some(c)) if !self.clearance_ok => {
                format!("clear by {:.0} % of F1 over {what} (below 60 %), {:.1} dB", c * 100.0, self.obstruction_db)
            }
            (true, Some(c)) => format!("clear, {:.0} % of F1", (c * 100.0).min(999.0)),
            (true, None) => "clear".into(),
        }
    }
}

fn tops(r: &LinkRow) -> String {
    r.top_interferers.iter().map(|s| format!("{} {:.0}%", s.id, s.share * 100.0)).collect::<Vec<_>>().join("; ")
}

fn opt(v: Option<f64>) -> String {
    v.map(|v| v.to_string()).unwrap_or_default()
}

impl LinkRow {
    /// The outage as a reader says it: "22.2", "≤ 5.3" (availability at least 99.999 %),
    /// "≥ 5259.6"; none without `[rain]`.
    pub fn outage_words(&self) -> Option<String> {
        let (m, bound) = (self.weather.outage_min_per_year?, self.weather.availability_bound?);
        Some(match bound {
            Bound::AtLeast => format!("≤ {m:.1}"),
            Bound::AtMost => format!("≥ {m:.1}"),
            _ => format!("{m:.1}"),
        })
    }

    /// The availability as a reader says it: "99.9934 %", "≥ 99.999 %", "≤ 99 %", "0 % (no
    /// margin)"; none without `[rain]`.
    pub fn availability_words(&self) -> Option<String> {
        let (pct, bound) = (self.weather.availability_pct?, self.weather.availability_bound?);
        Some(match bound {
            Bound::Within => format!("{pct:.4} %"),
            Bound::AtLeast => format!("≥ {pct} %"),
            Bound::AtMost => format!("≤ {pct} %"),
            Bound::NoMargin => "0 % (no margin)".into(),
        })
    }
}

/// CSV with one row per link.
pub fn csv(rows: &[LinkRow]) -> String {
    const HEADER: &[&str] = &[
        "from",
        "to",
        "length_m",
        "bearing_deg",
        "misalign_from_deg",
        "misalign_to_deg",
        "misaligned_from",
        "misaligned_to",
        "azimuth_from_should_deg",
        "azimuth_to_should_deg",
        "tx_gain_dbi",
        "rx_gain_dbi",
        "path_loss_db",
        "signal_dbm",
        "interference_dbm",
        "noise_dbm",
        "sinr_db",
        "coverage_probability",
        "margin_db",
        "capacity_mbps",
        "passes",
        "line_of_sight",
        "clearance_f1",
        "clearance_ok",
        "obstruction_db",
        "limited_by",
        "top_interferers",
        "gas_db",
        "fade_margin_db",
        "rain_fade_db",
        "availability_pct",
        "outage_min_per_year",
        "availability_bound",
        "meets_target",
        "channel",
        "polarisation",
        "mc_estimate",
        "mc_low",
        "mc_high",
    ];
    let s = |v: &dyn std::fmt::Display| v.to_string();
    let table = rows.iter().map(|r| {
        let mc = r.monte_carlo.as_ref();
        let mcf = |f: fn(&_) -> f64| mc.map(|m| format!("{:.4}", f(m))).unwrap_or_default();
        vec![
            r.from.clone(),
            r.to.clone(),
            s(&r.length_m),
            s(&r.bearing_deg),
            s(&r.misalign_from_deg),
            s(&r.misalign_to_deg),
            s(&r.misaligned_from),
            s(&r.misaligned_to),
            s(&r.azimuth_from_should_deg),
            s(&r.azimuth_to_should_deg),
            s(&r.tx_gain_dbi),
            s(&r.rx_gain_dbi),
            s(&r.path_loss_db),
            s(&r.signal_dbm),
            r.interference_dbm.map(|v| v.to_string()).unwrap_or_default(),
            s(&r.noise_dbm),
            s(&r.sinr_db),
            s(&r.coverage),
            s(&r.margin_db),
            s(&r.capacity_mbps),
            s(&r.passes),
            s(&r.line_of_sight),
            r.clearance_f1.map(|v| v.to_string()).unwrap_or_default(),
            s(&r.clearance_ok),
            s(&r.obstruction_db),
            r.limited_by.clone().unwrap_or_default(),
            tops(r),
            s(&r.weather.gas_db),
            opt(r.weather.fade_margin_db),
            opt(r.weather.rain_fade_db),
            opt(r.weather.availability_pct),
            opt(r.weather.outage_min_per_year),
            r.weather.availability_bound.map(Bound::name).unwrap_or("").to_string(),
            r.meets_target.map(|b| b.to_string()).unwrap_or_default(),
            r.channel.to_string(),
            r.polarisation.to_string(),
            mcf(|m| m.estimate),
            mcf(|m| m.low),
            mcf(|m| m.high),
        ]
    });
    crate::io::tables::csv_text(HEADER, table)
}

/// LineStrings from → to carrying the row's properties.
pub fn geojson(sc: &Scenario, rows: &[LinkRow]) -> geojson::FeatureCollection {
    let index: std::collections::HashMap<&str, &Node> = sc.nodes.iter().map(|n| (n.id.as_str(), n)).collect();
    let features = rows
        .iter()
        .map(|r| {
            let (a, b) = (index[r.from.as_str()], index[r.to.as_str()]);
            let props = match serde_json::to_value(r) {
                Ok(serde_json::Value::Object(m)) => m,
                _ => serde_json::Map::new(),
            };
            geojson::Feature {
                bbox: None,
                geometry: Some(geojson::Geometry::new(geojson::GeometryValue::new_line_string([
                    [a.lon, a.lat],
                    [b.lon, b.lat],
                ]))),
                id: None,
                properties: Some(props),
                foreign_members: None,
            }
        })
        .collect();
    geojson::FeatureCollection { bbox: None, features, foreign_members: None }
}

/// An aligned text table, with the rain section when the scenario has `[rain]`.
pub fn table(rows: &[LinkRow], sc: &Scenario) -> String {
    let (sinr_db, target) = (sc.thresholds.sinr_db, sc.thresholds.coverage_target);
    let mut s = format!(
        "{:<8} {:<8} {:>8} {:>7} {:>7} {:>7} {:>8} {:>8} {:>7} {:>7} {:>7} {:>8}  {}\n",
        "from",
        "to",
        "len_m",
        "mis_tx",
        "mis_rx",
        "sig_dBm",
        "int_dBm",
        "SINR_dB",
        "P_cov",
        "margin",
        "Mbit/s",
        "status",
        "top interferers"
    );
    for r in rows {
        let flag = |m: bool| if m { "!" } else { "" };
        s += &format!(
            "{:<8} {:<8} {:>8.1} {:>6.1}{:1} {:>6.1}{:1} {:>7.1} {:>8} {:>8.2} {:>7.4} {:>7.2} {:>7.0} {:>8}  {}\n",
            r.from,
            r.to,
            r.length_m,
            r.misalign_from_deg,
            flag(r.misaligned_from),
            r.misalign_to_deg,
            flag(r.misaligned_to),
            r.signal_dbm,
            r.interference_dbm.map(|v| format!("{v:.1}")).unwrap_or("-".into()),
            r.sinr_db,
            r.coverage,
            r.margin_db,
            r.capacity_mbps,
            if r.passes { "ok" } else { "FAIL" },
            tops(r)
        );
        if let Some(m) = &r.monte_carlo {
            s += &format!("{:>40} Monte Carlo P_cov {:.4} [{:.4}, {:.4}]\n", "", m.estimate, m.low, m.high);
        }
    }
    let fails = rows.iter().filter(|r| !r.passes).count();
    s += &format!(
        "{} link(s); {} below SINR {} dB or coverage {}; '!' marks an end misaligned beyond half its beamwidth\n",
        rows.len(),
        fails,
        sinr_db,
        target
    );
    for r in rows.iter().filter(|r| !r.clearance_ok) {
        s += &format!("{}-{}: {}\n", r.from, r.to, r.path_verdict());
    }
    if let Some(rain) = sc.weather().rain {
        s += &weather_table(rows, &rain, sc.weather().target_pct);
    }
    s
}

/// The rain section: fade margin, the rain fade at the target, availability, outage and the
/// gaseous loss per link.
fn weather_table(rows: &[LinkRow], rain: &Rain, target_pct: f64) -> String {
    let mut s = format!(
        "\nrain: {} mm/h exceeded 0.01 % of the year; ITU-R P.838-3 and P.530 ({}); target {target_pct} %\n",
        rain.rate_mm_h,
        rain.scaling_words()
    );
    s += &format!(
        "{:<8} {:<8} {:>8} {:>9} {:>17} {:>12} {:>7} {:>7}\n",
        "from", "to", "fade_dB", "rain_dB", "availability", "out_min/yr", "gas_dB", "target"
    );
    for r in rows {
        s += &format!(
            "{:<8} {:<8} {:>8} {:>9} {:>17} {:>12} {:>7.2} {:>7}\n",
            r.from,
            r.to,
            r.weather.fade_margin_db.map(|v| format!("{v:.2}")).unwrap_or("-".into()),
            r.weather.rain_fade_db.map(|v| format!("{v:.2}")).unwrap_or("-".into()),
            r.availability_words().unwrap_or("-".into()),
            r.outage_words().unwrap_or("-".into()),
            r.weather.gas_db,
            match r.meets_target {
                Some(true) => "ok",
                Some(false) => "BELOW",
                None => "-",
            }
        );
    }
    let below = rows.iter().filter(|r| r.meets_target == Some(false)).count();
    s += &format!("{below} link(s) below the availability target of {target_pct} %\n");
    s
}
