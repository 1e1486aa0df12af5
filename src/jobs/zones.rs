//! Zones on the map: interference hot spots (interference at or above noise plus the
//! hot-spot level) with their dominant interferers, and outage zones (coverage below the
//! target). Computed from the layers; written by [`crate::io::hotspots`].

use crate::geometry::regions::{Region, regions};
use crate::jobs::probe::{Contribution, probe};
use crate::model::scenario::Scenario;
use crate::model::units::lin_to_db;

/// An interference hot spot.
pub(crate) struct Hotspot {
    /// The polygon, its peak cell and value.
    pub(crate) region: Region,
    /// Up to three strongest interferers at the peak (activity-weighted), strongest first.
    pub(crate) dominant: Vec<String>,
}

/// Hot spots of an interference layer, with the dominant interferers at each peak from the
/// double-precision breakdown ([`probe`]).
pub(crate) fn hotspots(sc: &Scenario, interference: &[f32]) -> Vec<Hotspot> {
    let grid = &sc.grid;
    let level = (sc.noise_dbm() + sc.thresholds.hotspot_i_over_n_db) as f32;
    regions(grid, interference, level, false)
        .into_iter()
        .map(|region| {
            let (lat, lon) = (grid.lat_of_row(region.peak_cell.0), grid.lon_of_col(region.peak_cell.1));
            let pr = probe(sc, lat, lon);
            let server_idx = sc.nodes.iter().position(|n| n.id == pr.server);
            let mut contrib: Vec<&Contribution> =
                pr.contributions.iter().filter(|c| Some(c.index) != server_idx).collect();
            let weighted = |c: &&Contribution| c.power_dbm + lin_to_db(c.activity);
            contrib.sort_by(|a, b| weighted(b).total_cmp(&weighted(a)));
            let dominant = contrib.iter().take(3).map(|c| c.id.clone()).collect();
            Hotspot { region, dominant }
        })
        .collect()
}

/// Outage zones of a coverage layer: below the scenario's coverage target.
pub(crate) fn outage_zones(sc: &Scenario, coverage: &[f32]) -> Vec<Region> {
    regions(&sc.grid, coverage, sc.thresholds.coverage_target as f32, true)
}
