//! `summary.json`: the figures a reviewer reads first.

use crate::math::stats::Histogram;
use serde::Serialize;

/// Percentiles of a dB layer.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct Spread {
    /// 10th percentile.
    pub p10: Option<f64>,
    /// Median.
    pub p50: Option<f64>,
    /// 90th percentile.
    pub p90: Option<f64>,
    /// Maximum.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub max: Option<f64>,
}

impl Spread {
    /// p10/p50/p90 (and max when `with_max`) of a histogram.
    pub fn of(h: &Histogram, with_max: bool) -> Spread {
        let r = |x: Option<f64>| x.map(|v| (v * 100.0).round() / 100.0);
        Spread {
            p10: r(h.quantile(0.1)),
            p50: r(h.quantile(0.5)),
            p90: r(h.quantile(0.9)),
            max: if with_max { h.max().map(|m| (m * 100.0).round() / 100.0) } else { None },
        }
    }
}

/// The run summary.
#[derive(Debug, Clone, Serialize)]
pub struct Summary {
    /// Scenario name.
    pub scenario: String,
    /// Number of grid cells.
    pub cells: usize,
    /// Grid rows.
    pub rows: usize,
    /// Grid columns.
    pub cols: usize,
    /// Number of nodes.
    pub nodes: usize,
    /// Cell size, m.
    pub cell_m: f64,
    /// [west, south, east, north], degrees.
    pub bbox: [f64; 4],
    /// Receiver noise, dBm.
    pub noise_dbm: f64,
    /// Receiver antenna (`omni` or `aimed`).
    pub receiver: String,
    /// Layers computed.
    pub layers: Vec<String>,
    /// Percentiles of `total`, dBm.
    pub total_dbm: Option<Spread>,
    /// Percentiles of `interference`, dBm.
    pub interference_dbm: Option<Spread>,
    /// Percentiles of `sinr`, dB.
    pub sinr_db: Option<Spread>,
    /// SINR threshold, dB.
    pub sinr_threshold_db: f64,
    /// Fraction of cells with SINR at or above the threshold.
    pub sinr_ok_fraction: Option<f64>,
    /// Percentiles of `coverage` (probability).
    pub coverage: Option<Spread>,
    /// Coverage target.
    pub coverage_target: f64,
    /// Fraction of cells with coverage at or above the target.
    pub coverage_ok_fraction: Option<f64>,
    /// How `coverage` was computed.
    pub coverage_method: Option<String>,
    /// Number of outage polygons (coverage below the target) of one cell or more.
    pub outage_zones: Option<usize>,
    /// Hot spots and outage zones smaller than one cell (in hotspots.geojson with
    /// `sub_cell = true`, not counted above).
    pub sub_cell_zones: usize,
    /// Number of hot-spot polygons of one cell or more (null when the interference layer was
    /// not computed).
    pub hotspots: Option<usize>,
    /// Hot-spot level, dB over noise.
    pub hotspot_i_over_n_db: f64,
    /// Distance cutoff, m (null: every node counted at every cell).
    pub cutoff_m: Option<f64>,
    /// With a cutoff: upper bound of the power dropped at the worst cell, dB relative to
    /// noise (null: nothing dropped).
    pub neglected_db: Option<f64>,
    /// Node-cell pair evaluations.
    pub pair_evaluations: u64,
    /// Wall-clock seconds of the computation (varies from run to run).
    pub elapsed_s: f64,
    /// Files written, relative to the output folder.
    pub files: Vec<String>,
    /// Percentiles of `availability` over served cells, percent of an average year (p10 is
    /// the availability 90 % of cells reach or exceed).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub availability_pct: Option<Spread>,
    /// Availability target, percent (with the `availability` layer).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub availability_target_pct: Option<f64>,
    /// Fraction of served cells at or above the availability target.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub availability_ok_fraction: Option<f64>,
    /// With the `channel` layer: the channel names by index (the layer's values).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub channels: Option<Vec<String>>,
    /// With `[draw]`: layouts averaged (total and interference in mW, SINR in dB).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub realizations: Option<usize>,
    /// With `[draw]`: nodes drawn in the first layout (the one in layout.geojson).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub drawn_nodes: Option<usize>,
    /// With `--far-field-db`: the tolerance asked for, dB.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub far_field_db: Option<f64>,
    /// With `--far-field-db`: the worst cell's bound on the error of every written layer
    /// against the exact sum, dB (rounded up; at most the tolerance).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub far_field_bound_db: Option<f64>,
}
