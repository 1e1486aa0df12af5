//! The `map` job: engine, layers, hot spots and every output file, staged and committed
//! together.

use crate::engine::{Engine, LayerSet, Layers, Options};
use crate::error::{Error, Problem};
use crate::io::geotiff::write_geotiff;
use crate::io::heatmap::{MapSpec, Marker, render};
use crate::io::hotspots::regions;
use crate::io::layout::layout_geojson;
use crate::io::staging::Staging;
use crate::io::summary::{Spread, Summary};
use crate::jobs::probe::probe;
use crate::math::stats::Histogram;
use crate::model::scenario::Scenario;
use crate::model::units::{dbm_to_mw, mw_to_dbm};
use std::path::PathBuf;
use std::time::Instant;

/// Options of the map job.
#[derive(Debug, Clone)]
pub struct MapOptions {
    /// Output folder.
    pub out: PathBuf,
    /// Layers to compute and write.
    pub layers: LayerSet,
    /// Optional distance cutoff, m.
    pub cutoff_m: Option<f64>,
    /// Memory limit for the layers, MiB.
    pub max_memory_mib: u64,
    /// Show progress.
    pub progress: bool,
    /// With a `[draw]` table: independent random layouts to average over (≥ 1).
    pub realizations: usize,
}

/// What the map job produced.
pub struct MapResult {
    /// The summary written to `summary.json`.
    pub summary: Summary,
    /// The layers.
    pub layers: Layers,
    /// Paths written.
    pub files: Vec<PathBuf>,
}

/// Refuses grids whose layers would not fit in `max_memory_mib`.
pub fn check_memory(sc: &Scenario, layers: usize, max_memory_mib: u64) -> Result<(), Error> {
    let need = sc.grid.estimate_bytes(layers, rayon::current_num_threads());
    if need > max_memory_mib * 1024 * 1024 {
        return Err(Error::input(Problem::new(
            sc.path.display().to_string(),
            Some("[grid]".into()),
            "cell_m",
            format!(
                "{} x {} = {} cells need about {:.1} MiB for {layers} layer(s), above the limit of {max_memory_mib} MiB: use a larger cell_m, a smaller margin_m/bbox, fewer --layers, or raise --max-memory-mib",
                sc.grid.cols(),
                sc.grid.rows(),
                sc.grid.cells(),
                need as f64 / 1048576.0
            ),
        )));
    }
    Ok(())
}

/// Markers for every node and the planned links (pairs of indices, each drawn once).
pub fn markers_and_links(sc: &Scenario) -> (Vec<Marker>, Vec<(usize, usize)>) {
    let markers = sc
        .nodes
        .iter()
        .map(|n| Marker {
            lon: n.lon,
            lat: n.lat,
            azimuth_deg: n.azimuth_deg,
            beamwidth_deg: n.pattern.beamwidth_deg(),
        })
        .collect();
    let index: std::collections::HashMap<&str, usize> =
        sc.nodes.iter().enumerate().map(|(i, n)| (n.id.as_str(), i)).collect();
    let mut links: Vec<(usize, usize)> = sc
        .nodes
        .iter()
        .enumerate()
        .filter_map(|(i, n)| n.peer.as_deref().and_then(|p| index.get(p)).map(|&j| (i.min(j), i.max(j))))
        .collect();
    links.sort_unstable();
    links.dedup();
    (markers, links)
}

/// Runs the map job and writes every output into `opts.out`.
pub fn run_map(sc: &Scenario, opts: &MapOptions) -> Result<MapResult, Error> {
    check_memory(sc, opts.layers.count(), opts.max_memory_mib)?;
    let mut st = Staging::new(&opts.out, &[&sc.path, &sc.nodes_path])?;
    let t0 = Instant::now();
    let eopts = Options { layers: opts.layers, cutoff_m: opts.cutoff_m, progress: opts.progress };
    let (layers, used) = match &sc.draw {
        None => (Engine::new(sc).run(&eopts), sc.clone()),
        Some(spec) => ensemble(sc, spec, &eopts, opts.realizations.max(1)),
    };
    let sc = &used;
    let elapsed_s = t0.elapsed().as_secs_f64();
    let noise_dbm = sc.noise_dbm();
    let grid = &sc.grid;
    let (markers, links) = markers_and_links(sc);
    let mut files = Vec::new();
    let tif = |st: &mut Staging, name: &str, data: &[f32]| {
        st.write_with(name, |w| write_geotiff(w, grid, data).map_err(std::io::Error::other))
    };
    let png = |st: &mut Staging, name: &str, title: &str, unit: &str, data: &[f32], outlines: &[Vec<(f64, f64)>]| {
        let r = render(&MapSpec { grid, data, title, unit, markers: &markers, links: &links, outlines })
            .map_err(|e| Error::Output { path: st.dir().join(name), source: std::io::Error::other(e) })?;
        st.write(&format!("{name}.png"), &r.png)?;
        st.write(&format!("{name}.pgw"), r.world.as_bytes())
    };
    let mut hotspots = None;
    let mut hotspot_features = Vec::new();
    if let Some(t) = &layers.total {
        tif(&mut st, "total.tif", t)?;
        png(&mut st, "total", "Total received", "dBm", t, &[])?;
        files.extend(["total.tif", "total.png", "total.pgw"]);
    }
    if let Some(i) = &layers.interference {
        tif(&mut st, "interference.tif", i)?;
        let level = (noise_dbm + sc.thresholds.hotspot_i_over_n_db) as f32;
        let regs = regions(grid, i, level, false);
        let outlines = crate::io::hotspots::outlines(&regs);
        png(&mut st, "interference", "Interference", "dBm", i, &outlines)?;
        files.extend(["interference.tif", "interference.png", "interference.pgw"]);
        let features: Vec<geojson::Feature> = regs
            .iter()
            .map(|r| {
                let (lat, lon) = (grid.lat_of_row(r.peak_cell.0), grid.lon_of_col(r.peak_cell.1));
                let pr = probe(sc, lat, lon);
                let server_idx = sc.nodes.iter().position(|n| n.id == pr.server);
                let mut contrib: Vec<_> = pr.contributions.iter().filter(|c| Some(c.index) != server_idx).collect();
                let weighted =
                    |c: &&crate::jobs::probe::Contribution| c.power_dbm + crate::model::units::lin_to_db(c.activity);
                contrib.sort_by(|a, b| weighted(b).total_cmp(&weighted(a)));
                let dominant: Vec<String> = contrib.iter().take(3).map(|c| c.id.clone()).collect();
                let mut p = serde_json::Map::new();
                p.insert("kind".into(), "interference".into());
                p.insert("peak_i_over_n_db".into(), round2(r.peak_value as f64 - noise_dbm).into());
                p.insert("peak_interference_dbm".into(), round2(r.peak_value as f64).into());
                p.insert("peak_lon".into(), lon.into());
                p.insert("peak_lat".into(), lat.into());
                p.insert("area_m2".into(), round2(r.area_m2).into());
                p.insert("dominant".into(), dominant.into());
                geojson::Feature {
                    bbox: None,
                    geometry: Some(geojson::Geometry::from(&r.polygon)),
                    id: None,
                    properties: Some(p),
                    foreign_members: None,
                }
            })
            .collect();
        hotspots = Some(features.len());
        hotspot_features = features;
    }
    let mut outage = None;
    if let Some(cv) = &layers.coverage {
        tif(&mut st, "coverage.tif", cv)?;
        let target = sc.thresholds.coverage_target as f32;
        let regs = regions(grid, cv, target, true);
        let outlines = crate::io::hotspots::outlines(&regs);
        let title = format!("Coverage T={} dB", sc.thresholds.sinr_db);
        png(&mut st, "coverage", &title, crate::io::heatmap::PROBABILITY, cv, &outlines)?;
        files.extend(["coverage.tif", "coverage.png", "coverage.pgw"]);
        outage = Some(regs.len());
        for r in &regs {
            let (lat, lon) = (grid.lat_of_row(r.peak_cell.0), grid.lon_of_col(r.peak_cell.1));
            let mut p = serde_json::Map::new();
            p.insert("kind".into(), "outage".into());
            p.insert("min_coverage".into(), ((r.peak_value as f64 * 1e4).round() / 1e4).into());
            p.insert("coverage_target".into(), sc.thresholds.coverage_target.into());
            p.insert("worst_lon".into(), lon.into());
            p.insert("worst_lat".into(), lat.into());
            p.insert("area_m2".into(), round2(r.area_m2).into());
            hotspot_features.push(geojson::Feature {
                bbox: None,
                geometry: Some(geojson::Geometry::from(&r.polygon)),
                id: None,
                properties: Some(p),
                foreign_members: None,
            });
        }
    }
    if layers.interference.is_some() || layers.coverage.is_some() {
        let fc = geojson::FeatureCollection { bbox: None, features: hotspot_features, foreign_members: None };
        st.write("hotspots.geojson", fc.to_string().as_bytes())?;
        files.push("hotspots.geojson");
    }
    if let Some(s) = &layers.sinr {
        tif(&mut st, "sinr.tif", s)?;
        png(&mut st, "sinr", "Mean SINR", "dB", s, &[])?;
        files.extend(["sinr.tif", "sinr.png", "sinr.pgw"]);
    }
    if let Some(v) = layers.server.as_ref().filter(|_| opts.realizations <= 1) {
        tif(&mut st, "server.tif", v)?;
        files.push("server.tif");
    }
    st.write("layout.geojson", layout_geojson(&sc.nodes).to_string().as_bytes())?;
    files.push("layout.geojson");
    let b = grid.bbox();
    let sinr_hist = layers.sinr.as_deref().map(Histogram::of);
    let cov_hist = layers.coverage.as_deref().map(|c| Histogram::of_scaled(c, 100.0));
    let mut names = vec![];
    for (on, n) in [
        (opts.layers.total, "total"),
        (opts.layers.interference, "interference"),
        (opts.layers.sinr, "sinr"),
        (opts.layers.server, "server"),
    ] {
        if on {
            names.push(n.to_string());
        }
    }
    files.push("summary.json");
    let summary = Summary {
        scenario: sc.name.clone(),
        cells: grid.cells(),
        rows: grid.rows(),
        cols: grid.cols(),
        nodes: sc.nodes.len(),
        cell_m: grid.cell_m(),
        bbox: [b.west, b.south, b.east, b.north],
        noise_dbm: round2(noise_dbm),
        receiver: if sc.receiver.is_aimed() { "aimed" } else { "omni" }.into(),
        layers: names,
        total_dbm: layers.total.as_deref().map(|t| Spread::of(&Histogram::of(t), true)),
        interference_dbm: layers.interference.as_deref().map(|t| Spread::of(&Histogram::of(t), true)),
        sinr_db: sinr_hist.as_ref().map(|h| Spread::of(h, false)),
        sinr_threshold_db: sc.thresholds.sinr_db,
        sinr_ok_fraction: sinr_hist
            .as_ref()
            .and_then(|h| h.fraction_at_least(sc.thresholds.sinr_db))
            .map(|f| (f * 1e6).round() / 1e6),
        hotspots,
        hotspot_i_over_n_db: sc.thresholds.hotspot_i_over_n_db,
        cutoff_m: opts.cutoff_m,
        neglected_db: layers.neglected_db.map(round2),
        pair_evaluations: layers.pair_evaluations,
        elapsed_s: (elapsed_s * 1000.0).round() / 1000.0,
        files: files.iter().map(|s| s.to_string()).collect(),
        coverage: cov_hist.as_ref().map(|h| {
            let r = |x: Option<f64>| x.map(|v| (v / 100.0 * 1e4).round() / 1e4);
            Spread { p10: r(h.quantile(0.1)), p50: r(h.quantile(0.5)), p90: r(h.quantile(0.9)), max: None }
        }),
        coverage_target: sc.thresholds.coverage_target,
        coverage_ok_fraction: cov_hist
            .as_ref()
            .and_then(|h| h.fraction_at_least(sc.thresholds.coverage_target * 100.0))
            .map(|f| (f * 1e6).round() / 1e6),
        coverage_method: layers.coverage.as_ref().map(|_| {
            crate::model::coverage::CoverageModel::new(sc.fading, sc.thresholds.sinr_db, noise_dbm)
                .method
                .name()
                .to_string()
        }),
        outage_zones: outage,
        realizations: sc.draw.as_ref().map(|_| opts.realizations.max(1)),
        drawn_nodes: sc.draw.as_ref().map(|_| sc.nodes.iter().filter(|n| n.id.starts_with("draw-")).count()),
    };
    let json = serde_json::to_string_pretty(&summary)
        .map_err(|e| Error::Output { path: opts.out.join("summary.json"), source: e.into() })?;
    st.write("summary.json", json.as_bytes())?;
    let written = st.commit()?;
    Ok(MapResult { summary, layers, files: written })
}

/// Runs the engine over `n` drawn layouts (seeds seed, seed+1, …) and averages: `total` and
/// `interference` as ensemble means in mW, `sinr` as the mean of its dB values, `coverage` as
/// the mean probability; `server` is
/// left out when n > 1. Returns the layers and the scenario with the first drawn layout.
fn ensemble(sc: &Scenario, spec: &crate::model::draw::DrawSpec, eopts: &Options, n: usize) -> (Layers, Scenario) {
    let first = Scenario { nodes: crate::random::layout::layout(sc, spec, spec.seed), ..sc.clone() };
    let mut acc = Engine::new(&first).run(eopts);
    if n == 1 {
        return (acc, first);
    }
    let to_mw = |v: &mut Vec<f32>| {
        v.iter_mut().for_each(|x| *x = if *x == crate::NODATA { 0.0 } else { dbm_to_mw(*x as f64) as f32 })
    };
    for l in [&mut acc.total, &mut acc.interference].into_iter().flatten() {
        to_mw(l);
    }
    acc.server = None;
    for i in 1..n {
        let sci = Scenario { nodes: crate::random::layout::layout(sc, spec, spec.seed + i as u64), ..sc.clone() };
        let mut l = Engine::new(&sci).run(eopts);
        for (a, b) in [(&mut acc.total, &mut l.total), (&mut acc.interference, &mut l.interference)] {
            if let (Some(a), Some(b)) = (a, b) {
                to_mw(b);
                a.iter_mut().zip(b.iter()).for_each(|(x, y)| *x += *y);
            }
        }
        for (a, b) in [(&mut acc.sinr, &l.sinr), (&mut acc.coverage, &l.coverage)] {
            if let (Some(a), Some(b)) = (a, b) {
                a.iter_mut().zip(b).for_each(|(x, y)| {
                    *x = if *x == crate::NODATA || *y == crate::NODATA { crate::NODATA } else { *x + *y }
                });
            }
        }
        acc.pair_evaluations += l.pair_evaluations;
        acc.neglected_db = match (acc.neglected_db, l.neglected_db) {
            (Some(a), Some(b)) => Some(a.max(b)),
            (a, b) => a.or(b),
        };
    }
    let nf = n as f32;
    for l in [&mut acc.total, &mut acc.interference].into_iter().flatten() {
        l.iter_mut().for_each(|x| *x = if *x > 0.0 { mw_to_dbm((*x / nf) as f64) as f32 } else { crate::NODATA });
    }
    for s in [&mut acc.sinr, &mut acc.coverage].into_iter().flatten() {
        s.iter_mut().filter(|x| **x != crate::NODATA).for_each(|x| *x /= nf);
    }
    (acc, first)
}

fn round2(x: f64) -> f64 {
    (x * 100.0).round() / 100.0
}
