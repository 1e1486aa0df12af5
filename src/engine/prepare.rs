//! Preparing a scenario for the kernels: local coordinates, unit boresights, linear powers
//! with the 1 m loss folded in, pattern tables, the receiver's lowered form and the R-tree.

use crate::engine::kernels::{LUT_LEN, NodeK};
use crate::engine::sweep::SweepNode;
use crate::engine::{Engine, ObsPrep};
use crate::model::antenna::{AntennaPattern, GainForm, Pattern, signed_cos_sq_half_beam};
use crate::model::obstruction::wavelength_m;
use crate::model::scenario::{ReceiverAntenna, Scenario};
use crate::model::units::{db_to_lin, dbm_to_mw};
use rstar::{RTree, primitives::GeomWithData};

impl<'s> Engine<'s> {
    /// Prepares the scenario's nodes: local coordinates, unit boresights, linear powers,
    /// pattern tables, and the R-tree.
    pub fn new(sc: &'s Scenario) -> Engine<'s> {
        let rx_h = sc.receiver.height_m;
        let mut luts: Vec<(Pattern, Vec<f32>)> = Vec::new();
        let nodes: Vec<NodeK> = sc
            .nodes
            .iter()
            .enumerate()
            .map(|(i, n)| {
                let (x, y) = sc.frame.to_local(n.lon, n.lat);
                // The boresight in the plane: the true azimuth turned by the meridian
                // convergence at the node (true north at the node is not the plane's north).
                let az = (n.azimuth_deg + sc.frame.north_deg(n.lon, n.lat)).to_radians();
                let pl = sc.pathloss_of(n);
                let k_inv = db_to_lin(-pl.loss_at_1m_db());
                let p = dbm_to_mw(n.power_dbm) * k_inv;
                let mut table = || {
                    luts.iter().position(|(q, _)| *q == n.pattern).unwrap_or_else(|| {
                        luts.push((n.pattern, n.pattern.gain_table_over_half_angle_sine(LUT_LEN)));
                        luts.len() - 1
                    })
                };
                let (p_main, p_side, lut, dish) = match n.pattern.kernel() {
                    GainForm::Flat { main_dbi, side_dbi } => {
                        (p * db_to_lin(main_dbi), p * db_to_lin(side_dbi), None, None)
                    }
                    GainForm::Table => (p * db_to_lin(n.pattern.max_gain_dbi()), p, Some(table()), None),
                    // 10^(−1.2 (φ/θ)²) = 2^(−k φ²), φ in radians, down to the floor's share of the
                    // boresight gain; `p_side` stays the bare power, as for a table (the far
                    // field evaluates the node through its table).
                    GainForm::Parabolic { beamwidth_deg, gain_dbi, floor_dbi } => {
                        let k = 1.2 * std::f64::consts::LOG2_10 / beamwidth_deg.to_radians().powi(2);
                        let floor = db_to_lin(floor_dbi - gain_dbi);
                        (p * db_to_lin(gain_dbi), p, Some(table()), Some((k as f32, floor as f32)))
                    }
                };
                NodeK {
                    x: x as f32,
                    y: y as f32,
                    // Over a surface the kernels take each pair's height difference from the
                    // altitudes; 0 here keeps the cutoff's bound an upper bound.
                    dz2: if sc.surface.is_some() { 0.0 } else { ((n.height_m - rx_h) * (n.height_m - rx_h)) as f32 },
                    bx: az.sin() as f32,
                    by: az.cos() as f32,
                    cc: n.pattern.signed_cos_sq_half_beam() as f32,
                    p_main: p_main as f32,
                    p_side: p_side as f32,
                    act: n.activity as f32,
                    lut,
                    dish,
                    idx: i as u32,
                    beta_log2e: pl.beta_per_m() as f32 * std::f32::consts::LOG2_E,
                    p_max: p * db_to_lin(n.pattern.max_gain_dbi()),
                }
            })
            .collect();
        let tree = RTree::bulk_load(
            nodes.iter().map(|n| GeomWithData::new([n.x as f64, n.y as f64], n.idx as usize)).collect(),
        );
        let g = &sc.grid;
        let (sin_dlon, cos_dlon) =
            (0..g.cols()).map(|c| (g.lon_of_col(c) - sc.frame.lon0()).to_radians().sin_cos()).unzip();
        let rx_aim = match sc.receiver.antenna {
            ReceiverAntenna::Omni { .. } => None,
            ReceiverAntenna::Aimed(s) => Some((
                signed_cos_sq_half_beam(s.beamwidth_deg()) as f32,
                db_to_lin(s.max_gain_dbi()) as f32,
                db_to_lin(s.floor_dbi()) as f32,
            )),
        };
        let active = nodes.iter().filter(|n| n.act > 0.0).map(|n| n.idx as usize).collect();
        let obs = sc.surface().map(|s| {
            let nodes = sc
                .nodes
                .iter()
                .map(|n| {
                    let (u, v) = s.position(n.lon, n.lat);
                    SweepNode { u, v, z: sc.node_alt_m(n) as f32 }
                })
                .collect();
            ObsPrep { nodes, wavelength_m: wavelength_m(sc.pathloss.frequency_ghz()) as f32 }
        });
        Engine {
            sc,
            nodes,
            active,
            luts: luts.into_iter().map(|(_, t)| t).collect(),
            tree,
            sin_dlon,
            cos_dlon,
            noise_mw: dbm_to_mw(sc.noise_dbm()),
            g_omni: db_to_lin(sc.receiver.omni_gain_dbi()) as f32,
            rx_aim,
            g_signal: db_to_lin(sc.receiver.max_gain_dbi()) as f32,
            shadow_mean: sc.fading.shadow_mean() as f32,
            cov: sc.coverage_model(sc.noise_dbm()),
            obs,
            rain: crate::engine::availability::RainK::new(sc),
            noise_of: sc.nodes.iter().map(|n| dbm_to_mw(sc.noise_dbm_of(n)) as f32).collect(),
            chan: sc.nodes.iter().map(|n| n.channel as u32).collect(),
            cov_of: (0..sc.spectrum.channels.len())
                .map(|k| {
                    let bw = sc.spectrum.channels[k].bandwidth_mhz;
                    let noise = crate::model::noise::noise_dbm(bw, sc.radio.noise_figure_db);
                    sc.coverage_model(noise)
                })
                .collect(),
            coupling: coupling_table(sc),
        }
    }
}

/// Each node's class (its channel and polarisation) and the coupling between classes, when
/// the layout uses more than one class; `None` when every node is co-channel and co-polar.
fn coupling_table(sc: &Scenario) -> Option<crate::engine::CouplingPrep> {
    let key = |n: &crate::model::node::Node| (n.channel, n.polarisation);
    if !sc.spectrum.couples(sc.nodes.iter().map(key)) {
        return None;
    }
    let mut classes: Vec<(usize, crate::model::node::Polarisation)> = Vec::new();
    let class: Vec<u32> = sc
        .nodes
        .iter()
        .map(|n| {
            let k = key(n);
            classes.iter().position(|c| *c == k).unwrap_or_else(|| {
                classes.push(k);
                classes.len() - 1
            }) as u32
        })
        .collect();
    let m = classes.len();
    let mut table = vec![0f32; m * m];
    for (i, &(ci, pi)) in classes.iter().enumerate() {
        for (s, &(cs, ps)) in classes.iter().enumerate() {
            table[i * m + s] = sc.spectrum.coupling(ci, pi, cs, ps) as f32;
        }
    }
    Some(crate::engine::CouplingPrep { class, table, classes: m })
}
