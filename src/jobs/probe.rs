//! The breakdown at one point, in double precision: each node's distance, bearing, gains,
//! path loss and received power, then total, best server, interference, noise and SINR.
//! It follows the engine's definitions (see [`crate::engine`]) and serves as its reference.

use crate::jobs::weather::{Path, figures};
use crate::model::link::{Budget, Geometry};
use crate::model::obstruction::{Edges, Obstruction};
use crate::model::scenario::Scenario;
use crate::model::units::{dbm_to_mw, mw_to_dbm};
use serde::Serialize;

/// One node's contribution at the probed point.
#[derive(Debug, Clone, Serialize)]
pub struct Contribution {
    /// Node id.
    pub id: String,
    /// Index in layout order.
    pub index: usize,
    /// 3-D slant range, m.
    pub distance_m: f64,
    /// Bearing from the point to the node, degrees clockwise from true north.
    pub bearing_deg: f64,
    /// Transmit antenna gain toward the point, dBi.
    pub tx_gain_dbi: f64,
    /// Receive antenna gain toward the node, dBi.
    pub rx_gain_dbi: f64,
    /// Path loss, dB.
    pub path_loss_db: f64,
    /// Mean received power while transmitting (with the mean shadowing gain), dBm.
    pub power_dbm: f64,
    /// Fraction of time the node transmits.
    pub activity: f64,
    /// Its channel's name.
    pub channel: String,
    /// Its polarisation (`V` or `H`).
    pub polarisation: String,
    /// Coupling into a receiver on the server's channel and polarisation, dB (0 co-channel;
    /// none when the channels are too far apart to couple).
    pub coupling_db: Option<f64>,
    /// Whether the straight ray from the node clears the surface.
    pub line_of_sight: bool,
    /// Obstruction (diffraction) loss, dB, included in `power_dbm`.
    pub obstruction_db: f64,
    /// ν of the point of least clearance (with a surface).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub nu: Option<f64>,
    /// What limits the path: a building's label or "ground at N m" from the node.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub limited_by: Option<String>,
}

/// The full breakdown.
#[derive(Debug, Clone, Serialize)]
pub struct Probe {
    /// Latitude probed, degrees.
    pub lat: f64,
    /// Longitude probed, degrees.
    pub lon: f64,
    /// Activity-weighted total with the omni receiver gain, dBm.
    pub total_dbm: f64,
    /// Aggregate interference at a receiver served by `server`, dBm (−inf printed as null).
    pub interference_dbm: Option<f64>,
    /// Receiver noise, dBm.
    pub noise_dbm: f64,
    /// Mean SINR, dB.
    pub sinr_db: f64,
    /// Id of the best server.
    pub server: String,
    /// P\[SINR ≥ T\] with the scenario's fading (T = `[thresholds] sinr_db`).
    pub coverage: f64,
    /// SINR threshold T, dB.
    pub sinr_threshold_db: f64,
    /// How `coverage` was computed.
    pub coverage_method: String,
    /// Monte Carlo cross-check of `coverage`, when asked for.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub monte_carlo: Option<McCheck>,
    /// The server path's gas, fade margin, rain fade at the target, availability and outage.
    #[serde(flatten)]
    pub weather: crate::jobs::weather::Reported,
    /// The availability target, percent.
    pub availability_target_pct: f64,
    /// Per-node contributions, strongest first.
    pub contributions: Vec<Contribution>,
}

/// A seeded Monte Carlo estimate of a probability with its 95 % Wilson interval.
#[derive(Debug, Clone, Serialize)]
pub struct McCheck {
    /// Trials.
    pub trials: usize,
    /// Seed.
    pub seed: u64,
    /// Estimate.
    pub estimate: f64,
    /// 95 % interval, low end.
    pub low: f64,
    /// 95 % interval, high end.
    pub high: f64,
}

/// Computes the breakdown at (`lat`, `lon`).
pub fn probe(sc: &Scenario, lat: f64, lon: f64) -> Probe {
    probe_with(sc, lat, lon, None)
}

/// Like [`probe`], with an optional Monte Carlo check of the coverage (trials, seed).
pub fn probe_with(sc: &Scenario, lat: f64, lon: f64, mc: Option<(usize, u64)>) -> Probe {
    let rx = &sc.receiver;
    let g_omni = rx.omni_gain_dbi();
    // First pass: the transmit side of every path (the receiver's aim needs the server).
    let point = sc.receiver_end(lon, lat);
    let obs: Vec<Obstruction> = sc.nodes.iter().map(|n| sc.node_to_point(n, lon, lat, Edges::Three)).collect();
    let budgets: Vec<Budget> = sc
        .nodes
        .iter()
        .zip(&obs)
        .map(|(n, o)| {
            Budget::new(sc.pathloss_of(n), n, Geometry::between(&sc.node_end(n), &point)).obstructed(o.loss_db)
        })
        .collect();
    // The server is the strongest node that transmits (the configuration refuses a layout in
    // which none does).
    let active = |k: usize| sc.nodes[k].activity > 0.0;
    let first = (0..sc.nodes.len()).find(|&k| active(k)).unwrap_or(0);
    let server = budgets.iter().enumerate().fold(first, |best, (k, b)| {
        if active(k) && b.isotropic_dbm() > budgets[best].isotropic_dbm() { k } else { best }
    });
    let server_bearing = budgets[server].geometry.bearing_from_rx_deg;
    let mut contributions: Vec<Contribution> = budgets
        .iter()
        .enumerate()
        .map(|(i, b)| {
            let n = &sc.nodes[i];
            let bearing = b.geometry.bearing_from_rx_deg;
            let rx_gain =
                if rx.is_aimed() { rx.pattern().gain_dbi(bearing - server_bearing) } else { rx.max_gain_dbi() };
            let rx_gain = if i == server { rx.max_gain_dbi() } else { rx_gain };
            Contribution {
                id: n.id.clone(),
                index: i,
                distance_m: b.geometry.distance_m,
                bearing_deg: bearing,
                tx_gain_dbi: b.tx_gain_dbi,
                rx_gain_dbi: rx_gain,
                path_loss_db: b.path_loss_db,
                power_dbm: b.received_dbm(rx_gain),
                activity: n.activity,
                channel: sc.spectrum.channels[n.channel].name.clone(),
                polarisation: n.polarisation.name().into(),
                coupling_db: {
                    let c = sc.coupling(n, &sc.nodes[server]);
                    (c > 0.0).then(|| crate::model::units::lin_to_db(c))
                },
                line_of_sight: obs[i].line_of_sight,
                obstruction_db: b.obstruction_db,
                nu: sc.surface().and(obs[i].limit).map(|l| l.nu),
                limited_by: obs[i].limit.and_then(|l| sc.surface().map(|s| s.describe(&l))),
            }
        })
        .collect();
    let total_mw: f64 =
        budgets.iter().zip(&sc.nodes).map(|(b, n)| n.activity * dbm_to_mw(b.isotropic_dbm() + g_omni)).sum();
    // What each interferer puts into the server's channel and polarisation.
    let coupled = |c: &Contribution| c.coupling_db.map_or(0.0, |k| dbm_to_mw(c.power_dbm + k));
    let interference_mw: f64 =
        contributions.iter().filter(|c| c.index != server).map(|c| c.activity * coupled(c)).sum();
    let signal_mw = dbm_to_mw(contributions[server].power_dbm);
    let noise_dbm = sc.noise_dbm_of(&sc.nodes[server]);
    // Means of the shadowed powers: every mean is E[10^(X/10)] times the unshadowed one (the
    // coverage model takes the unshadowed ones and draws the shadowing itself).
    let shadow = sc.fading.shadow_mean();
    let sinr_db = mw_to_dbm(signal_mw * shadow / (interference_mw * shadow + dbm_to_mw(noise_dbm)));
    let cov = sc.coverage_model(noise_dbm);
    let interferers: Vec<(f64, f64)> =
        contributions.iter().filter(|c| c.index != server).map(|c| (c.activity, coupled(c))).collect();
    let coverage = cov.probability(signal_mw, &interferers);
    let monte_carlo = mc.map(|(trials, seed)| {
        let bar = crate::progress::bar("Monte Carlo", trials as u64, "trials");
        let (estimate, low, high) = cov.monte_carlo_ticking(signal_mw, &interferers, trials, seed, &bar);
        bar.finish_and_clear();
        McCheck { trials, seed, estimate, low, high }
    });
    let wanted = Path { tx: &sc.nodes[server], rx_lat: lat, geometry: &budgets[server].geometry };
    let intf: Vec<(Path, f64)> = contributions
        .iter()
        .filter(|c| c.index != server)
        .map(|c| {
            let p = Path { tx: &sc.nodes[c.index], rx_lat: lat, geometry: &budgets[c.index].geometry };
            (p, c.activity * coupled(c) * shadow)
        })
        .collect();
    let wx = figures(sc, &wanted, signal_mw * shadow, &intf, dbm_to_mw(noise_dbm), sinr_db);
    let shadow_db = crate::model::units::lin_to_db(shadow);
    contributions.iter_mut().for_each(|c| c.power_dbm += shadow_db);
    contributions.sort_by(|a, b| b.power_dbm.total_cmp(&a.power_dbm).then(a.index.cmp(&b.index)));
    Probe {
        coverage,
        sinr_threshold_db: sc.thresholds.sinr_db,
        coverage_method: cov.method.name().to_string(),
        monte_carlo,
        lat,
        lon,
        total_dbm: mw_to_dbm(total_mw * shadow),
        interference_dbm: (interference_mw > 0.0).then(|| mw_to_dbm(interference_mw * shadow)),
        noise_dbm,
        sinr_db,
        server: sc.nodes[server].id.clone(),
        weather: wx.reported(false),
        availability_target_pct: sc.weather().target_pct,
        contributions,
    }
}

impl Probe {
    /// A plain-text table for a terminal.
    pub fn to_table(&self) -> String {
        let mut s = format!("point {:.6}, {:.6}\n", self.lat, self.lon);
        s += &format!(
            "{:<14} {:>10} {:>8} {:>8} {:>8} {:>9} {:>8} {:>10} {:>6}\n",
            "node", "dist_m", "brg_deg", "tx_dBi", "rx_dBi", "loss_dB", "obst_dB", "rx_dBm", "act"
        );
        for c in &self.contributions {
            s += &format!(
                "{:<14} {:>10.1} {:>8.1} {:>8.2} {:>8.2} {:>9.2} {:>7.2}{:1} {:>10.2} {:>6.2}{}\n",
                c.id,
                c.distance_m,
                c.bearing_deg,
                c.tx_gain_dbi,
                c.rx_gain_dbi,
                c.path_loss_db,
                c.obstruction_db,
                if c.line_of_sight { "" } else { "*" },
                c.power_dbm,
                c.activity,
                c.limited_by.as_deref().map(|l| format!("  {l}")).unwrap_or_default()
            );
        }
        if self.contributions.iter().any(|c| !c.line_of_sight) {
            s += "'*' marks a node out of line of sight (the ray is blocked); the last column names the obstacle\n";
        }
        s += &format!("total         {:>10.2} dBm\n", self.total_dbm);
        s += &format!("best server   {:>10}\n", self.server);
        match self.interference_dbm {
            Some(i) => s += &format!("interference  {i:>10.2} dBm\n"),
            None => s += "interference        none\n",
        }
        s += &format!("noise         {:>10.2} dBm\n", self.noise_dbm);
        s += &format!("SINR          {:>10.2} dB\n", self.sinr_db);
        s += &format!("P[SINR >= {} dB] {:>7.4}   ({})\n", self.sinr_threshold_db, self.coverage, self.coverage_method);
        if let Some(m) = &self.monte_carlo {
            s += &format!(
                "Monte Carlo   {:>10.4}   95 % interval [{:.4}, {:.4}], {} trials, seed {}\n",
                m.estimate, m.low, m.high, m.trials, m.seed
            );
        }
        s += &format!("gas on server path {:>6.2} dB\n", self.weather.gas_db);
        if let (Some(p), Some(b), Some(o), Some(r)) = (
            self.weather.availability_pct,
            self.weather.availability_bound,
            self.weather.outage_min_per_year,
            self.weather.rain_fade_db,
        ) {
            use crate::model::weather::rain::Bound;
            let fm = self.weather.fade_margin_db.map(|m| format!("{m:.2} dB")).unwrap_or("none".into());
            let (pw, ow) = match b {
                Bound::Within => (format!("{p:.4} %"), format!("{o:.1}")),
                Bound::AtLeast => (format!(">= {p} %"), format!("<= {o:.1}")),
                Bound::AtMost => (format!("<= {p} %"), format!(">= {o:.1}")),
                Bound::NoMargin => ("0 % (no margin)".into(), format!("{o:.1}")),
            };
            s += &format!("fade margin   {fm:>10}\n");
            s += &format!("rain fade at {} %: {r:.2} dB\n", self.availability_target_pct);
            s += &format!("availability  {pw:>10}   outage {ow} min a year\n");
        }
        s
    }
}
