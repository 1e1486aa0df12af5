//! The `map` job: engine, layers, hot spots and every output file, staged and committed
//! together.

use crate::engine::{Engine, LayerSet, Layers, Options};
use crate::error::{Error, Problem};
use crate::geometry::regions::{outlines, regions};
use crate::io::heatmap::{AVAILABILITY, Marker, PROBABILITY};
use crate::io::hotspots::zones_geojson;
use crate::io::layout::layout_geojson;
use crate::io::staging::Staging;
use crate::io::summary::{Spread, Summary};
use crate::io::writer::{Context, LayerOut, write_layer};
use crate::jobs::zones::{hotspots, outage_zones};
use crate::math::stats::Histogram;
use crate::model::scenario::Scenario;
use crate::model::units::{dbm_to_mw, mw_to_dbm, round_dp};
use rayon::prelude::*;
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
    /// Compute one tile of the map (a block of rows) into its own folder under `out`.
    pub tile: Option<crate::run::tiles::Tile>,
    /// Far-field aggregation with this tolerance, dB (see [`Engine::run_far_field`]).
    pub far_field_db: Option<f64>,
}

/// Why the far-field aggregation cannot run on this scenario with these options: one problem
/// per reason, naming the table or flag.
pub fn far_field_problems(sc: &Scenario, opts: &MapOptions) -> Vec<Problem> {
    let mut v = Vec::new();
    let file = sc.path.display().to_string();
    let why = "the far-field aggregation sums clusters of nodes as isotropic emitters";
    if let Some(t) = opts.far_field_db
        && !(t.is_finite() && (0.05..=6.0).contains(&t))
    {
        v.push(Problem::flag("--far-field-db", format!("value {t} is outside the allowed range [0.05, 6] dB")));
    }
    if opts.cutoff_m.is_some() {
        v.push(Problem::flag(
            "--cutoff-m",
            "the far-field aggregation replaces the cutoff: give one of --far-field-db and --cutoff-m".to_string(),
        ));
    }
    let l = opts.layers;
    for (name, on) in
        [("coverage", l.coverage), ("visible", l.visible), ("availability", l.availability), ("channel", l.channel)]
    {
        if on {
            v.push(Problem::flag(
                "--layers",
                format!("layer `{name}` is not computed with --far-field-db ({why}); allowed there: total, interference, sinr, server"),
            ));
        }
    }
    if sc.receiver.is_aimed() {
        v.push(Problem::new(&file, Some("[receiver]".into()), "antenna", format!("an aimed receiver is not supported with --far-field-db ({why}, and an aimed receiver weights each interferer by its direction): use an omni receiver")));
    }
    if sc.surface().is_some() {
        v.push(Problem::new(&file, Some("[surface]".into()), "surface", format!("--far-field-db does not model obstruction ({why}, and each pair's line of sight differs): map without it, or in tiles")));
    }
    let mut classes = sc.nodes.iter().map(|n| (n.channel, n.polarisation));
    if let Some(first) = classes.next()
        && classes.any(|c| c != first)
    {
        v.push(Problem::new(
            &file,
            Some("[channels]".into()),
            "channel",
            format!("--far-field-db needs every node on one channel and polarisation ({why} of one class)"),
        ));
    }
    v
}

/// What the map job produced.
pub struct MapResult {
    /// The summary written to `summary.json`.
    pub summary: Summary,
    /// The layers.
    pub layers: Layers,
    /// Paths written.
    pub files: Vec<PathBuf>,
    /// Seconds spent writing (statistics, zones, every file and the commit), beside the
    /// summary's `elapsed_s` of computation.
    pub write_s: f64,
}

/// Estimated peak memory of a map of `layers` layers, bytes: the grid's estimate
/// ([`crate::geometry::grid::Grid::estimate_bytes`]) and, over a surface, the lattice (12
/// bytes a cell), one band of sweep factors (4 bytes a node a cell, at most
/// [`crate::engine::SWEEP_BAND_BYTES`]), and per band cell the receiver altitudes (4 bytes)
/// and each thread's sweep scratch (a one-byte ray offset and an 8-byte horizon).
pub fn estimate_bytes(sc: &Scenario, layers: usize) -> u64 {
    estimate_bytes_rows(sc, layers, sc.grid.rows())
}

/// [`estimate_bytes`] for `rows` rows of the grid (a tile).
pub fn estimate_bytes_rows(sc: &Scenario, layers: usize, rows: usize) -> u64 {
    let threads = rayon::current_num_threads();
    let mut need = sc.grid.rows_span(0..rows.clamp(1, sc.grid.rows())).estimate_bytes(layers, threads);
    if let Some(s) = sc.surface() {
        let (rows, cols, nodes) = (sc.grid.rows() as u64, sc.grid.cols() as u64, sc.nodes.len().max(1) as u64);
        let band_cells = crate::engine::band_rows(rows as usize, cols as usize, nodes as usize) as u64 * cols;
        need += s.cells() as u64 * 12 + band_cells * (4 * nodes + 4 + 9 * threads as u64);
    }
    need
}

/// Refuses grids whose layers would not fit in `max_memory_mib`.
pub fn check_memory(sc: &Scenario, layers: usize, max_memory_mib: u64) -> Result<(), Error> {
    check_memory_rows(sc, layers, max_memory_mib, sc.grid.rows())
}

/// [`check_memory`] for `rows` rows of the grid (a tile).
pub fn check_memory_rows(sc: &Scenario, layers: usize, max_memory_mib: u64, rows: usize) -> Result<(), Error> {
    let need = estimate_bytes_rows(sc, layers, rows);
    if need > max_memory_mib.saturating_mul(1024 * 1024) {
        return Err(Error::input(Problem::new(
            sc.path.display().to_string(),
            Some("[grid]".into()),
            "cell_m",
            format!(
                "{} x {} = {} cells need about {:.1} MiB for {layers} layer(s), above the limit of {max_memory_mib} MiB: use a larger cell_m, a smaller margin_m/bbox, fewer --layers, more --tile tiles, or raise --max-memory-mib",
                sc.grid.cols(),
                rows,
                sc.grid.cols() * rows,
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
            id: n.id.clone(),
        })
        .collect();
    (markers, crate::model::node::peer_links(&sc.nodes))
}

/// The file stem of every layer.
pub(crate) const MAP_STEMS: [&str; 8] =
    ["total", "interference", "sinr", "server", "coverage", "visible", "availability", "channel"];

/// Every file name `map` can write: a rerun retires those it does not write again.
pub fn map_file_names() -> Vec<String> {
    let mut v: Vec<String> = MAP_STEMS.iter().flat_map(|s| crate::io::writer::layer_file_names(s)).collect();
    v.extend(["hotspots.geojson", "layout.geojson", "site.kmz", "summary.json"].map(String::from));
    v
}

/// Runs the map job and writes every output into `opts.out` (with a tile, one tile of the
/// map into its own folder: [`crate::run::tiles`]).
pub fn run_map(sc: &Scenario, opts: &MapOptions) -> Result<MapResult, Error> {
    if opts.far_field_db.is_some() {
        let p = far_field_problems(sc, opts);
        if !p.is_empty() {
            return Err(Error::Input(p));
        }
    }
    if let Some(tile) = opts.tile {
        return crate::run::tiles::run_tile(sc, opts, tile);
    }
    check_memory(sc, opts.layers.count(), opts.max_memory_mib)?;
    let st = Staging::folder(&opts.out, &sc.input_files(), map_file_names())?;
    let t0 = Instant::now();
    let (layers, used) = compute(sc, opts, 0..sc.grid.rows());
    let elapsed_s = t0.elapsed().as_secs_f64();
    let stats = LayerStats::of(&layers, used.weather().target_pct);
    let run = RunFacts {
        far_field_db: opts.far_field_db,
        realizations: opts.realizations,
        cutoff_m: opts.cutoff_m,
        elapsed_s,
    };
    let summary = write_map(&st, &used, &layers, &stats, &run)?;
    let written = st.commit()?;
    Ok(MapResult { summary, layers, files: written, write_s: t0.elapsed().as_secs_f64() - elapsed_s })
}

/// Computes the layers of rows `rows` of the grid (one layout, or the ensemble of a
/// `[draw]` table); returns them with the scenario they were computed on (the first drawn
/// layout with a `[draw]` table).
pub(crate) fn compute(sc: &Scenario, opts: &MapOptions, rows: std::ops::Range<usize>) -> (Layers, Scenario) {
    // A drawn ensemble counts its realisations instead of each engine run's rows.
    let n = opts.realizations.max(1);
    let per_run = opts.progress && (sc.draw.is_none() || n == 1);
    let eopts = Options { layers: opts.layers, cutoff_m: opts.cutoff_m, progress: per_run };
    let run = |e: &Engine<'_>| match opts.far_field_db {
        Some(tol) => e.run_far_field(opts.layers, rows.clone(), tol),
        None => e.run_rows(&eopts, rows.clone()),
    };
    match &sc.draw {
        None => (run(&Engine::new(sc)), sc.clone()),
        Some(spec) => ensemble(sc, spec, &run, n, opts.progress),
    }
}

/// What a run knew besides its layers, for the summary.
pub(crate) struct RunFacts {
    pub(crate) far_field_db: Option<f64>,
    pub(crate) realizations: usize,
    pub(crate) cutoff_m: Option<f64>,
    pub(crate) elapsed_s: f64,
}

/// What summary.json reports of the layers' values: their histograms and counts, which add
/// up over the tiles of a map ([`LayerStats::merge`]), so a merged map's summary is exact.
#[derive(Clone, Default, serde::Serialize, serde::Deserialize)]
pub(crate) struct LayerStats {
    total: Option<Histogram>,
    interference: Option<Histogram>,
    sinr: Option<Histogram>,
    /// Coverage × 100.
    coverage: Option<Histogram>,
    /// −10 log10(100 − A) of the availability A, %.
    availability: Option<Histogram>,
    /// Cells served (availability defined) and at or above the target.
    availability_served: u64,
    availability_ok: u64,
    pub(crate) pair_evaluations: u64,
    /// The worst cell's bound on the power a cutoff dropped, dB relative to noise (unrounded).
    neglected_db: Option<f64>,
    /// The worst cell's far-field bound, dB (unrounded).
    #[serde(default)]
    far_field_bound_db: Option<f64>,
}

impl LayerStats {
    /// The statistics of computed layers.
    pub(crate) fn of(layers: &Layers, target_pct: f64) -> LayerStats {
        let avail_hist = layers.availability.as_deref().map(|a| {
            let u: Vec<f32> =
                a.iter().map(|&v| if v == crate::NODATA { v } else { -10.0 * (100.0 - v).max(1e-6).log10() }).collect();
            Histogram::of(&u)
        });
        let a = layers.availability.as_deref().unwrap_or_default();
        LayerStats {
            total: layers.total.as_deref().map(Histogram::of),
            interference: layers.interference.as_deref().map(Histogram::of),
            sinr: layers.sinr.as_deref().map(Histogram::of),
            coverage: layers.coverage.as_deref().map(|c| Histogram::of_scaled(c, 100.0)),
            availability: avail_hist,
            availability_served: a.iter().filter(|v| **v != crate::NODATA).count() as u64,
            availability_ok: a.iter().filter(|v| **v != crate::NODATA && **v as f64 >= target_pct - 1e-9).count()
                as u64,
            pair_evaluations: layers.pair_evaluations,
            neglected_db: layers.neglected_db,
            far_field_bound_db: layers.far_field_bound_db,
        }
    }

    /// Adds the statistics of another part of the same map.
    pub(crate) fn merge(&mut self, o: &LayerStats) {
        for (a, b) in [
            (&mut self.total, &o.total),
            (&mut self.interference, &o.interference),
            (&mut self.sinr, &o.sinr),
            (&mut self.coverage, &o.coverage),
            (&mut self.availability, &o.availability),
        ] {
            match (a.as_mut(), b) {
                (Some(a), Some(b)) => a.merge(b),
                (None, Some(b)) => *a = Some(b.clone()),
                _ => {}
            }
        }
        self.availability_served += o.availability_served;
        self.availability_ok += o.availability_ok;
        self.pair_evaluations += o.pair_evaluations;
        self.neglected_db = match (self.neglected_db, o.neglected_db) {
            (Some(a), Some(b)) => Some(a.max(b)),
            (a, b) => a.or(b),
        };
        self.far_field_bound_db = match (self.far_field_bound_db, o.far_field_bound_db) {
            (Some(a), Some(b)) => Some(a.max(b)),
            (a, b) => a.or(b),
        };
    }
}

/// Writes every output of a map computed on the whole grid (`layers`, with the statistics
/// `stats`) into `st` and returns the summary; `map` and `merge` both end here.
pub(crate) fn write_map(
    st: &Staging,
    sc: &Scenario,
    layers: &Layers,
    stats: &LayerStats,
    run: &RunFacts,
) -> Result<Summary, Error> {
    let noise_dbm = sc.noise_dbm();
    let grid = &sc.grid;
    let (markers, links) = markers_and_links(sc);
    let footprints = sc.surface().map_or(&[][..], |s| s.outlines());
    let facts = crate::io::heatmap::sheet_facts(sc);
    let cx = Context { grid, markers: &markers, links: &links, footprints, facts: &facts, context: &sc.context.lines };
    let present = [&layers.total, &layers.interference, &layers.coverage, &layers.sinr, &layers.server]
        .into_iter()
        .chain([&layers.visible, &layers.channel, &layers.availability])
        .filter(|l| l.is_some())
        .count();
    // One step a layer, and one for the zones, the field file and the summary.
    let bar = crate::progress::bar("writing", present as u64 + 1, "steps");
    // Every layer written, in order, for the field file.
    let mut outs: Vec<LayerOut> = Vec::new();
    let hot = layers.interference.as_deref().map(|i| hotspots(sc, i));
    let low = layers.coverage.as_deref().map(|c| outage_zones(sc, c));
    let layer = |name, title: &str, unit, data, outlines| LayerOut {
        name,
        title: title.to_string(),
        unit,
        data,
        outlines,
        picture: name != "server" && name != "channel",
        categories: match name {
            "server" => Some(sc.nodes.iter().map(|n| n.id.clone()).collect()),
            "channel" => Some(sc.spectrum.channels.iter().map(|c| c.name.clone()).collect()),
            _ => None,
        },
        range: crate::io::heatmap::layer_range(&sc.colour_scale, name, unit, data),
    };
    if let Some(t) = &layers.total {
        outs.push(layer("total", "Total received", "dBm", t, Vec::new()));
    }
    if let (Some(i), Some(h)) = (&layers.interference, &hot) {
        let outlines = h.iter().flat_map(|h| h.region.rings_lon_lat()).collect();
        outs.push(layer("interference", "Interference", "dBm", i, outlines));
    }
    if let (Some(cv), Some(z)) = (&layers.coverage, &low) {
        let title = format!("Coverage T={} dB", sc.thresholds.sinr_db);
        outs.push(layer("coverage", &title, PROBABILITY, cv, outlines(z)));
    }
    // The zones file stands after these layers' files in the summary's list.
    let zones_at = outs.len();
    if hot.is_some() || low.is_some() {
        let (h, z) = (hot.as_deref().unwrap_or_default(), low.as_deref().unwrap_or_default());
        let fc = zones_geojson(grid, noise_dbm, sc.thresholds.coverage_target, h, z);
        st.write("hotspots.geojson", fc.to_string().as_bytes())?;
    }
    // Zones smaller than one cell are below the grid's resolution: written (flagged
    // `sub_cell`) but not counted.
    let hotspots = hot.as_ref().map(|h| h.iter().filter(|h| !h.region.is_sub_cell(grid)).count());
    let outage = low.as_ref().map(|z| z.iter().filter(|r| !r.is_sub_cell(grid)).count());
    let sub_cell_zones = hot.as_ref().map_or(0, |h| h.iter().filter(|h| h.region.is_sub_cell(grid)).count())
        + low.as_ref().map_or(0, |z| z.iter().filter(|r| r.is_sub_cell(grid)).count());
    if let Some(s) = &layers.sinr {
        outs.push(layer("sinr", "Mean SINR", "dB", s, Vec::new()));
    }
    if let Some(v) = layers.server.as_ref().filter(|_| run.realizations <= 1) {
        outs.push(layer("server", "Best server", "", v, Vec::new()));
    }
    if let Some(v) = &layers.visible {
        let title = "Nodes in line of sight";
        outs.push(layer("visible", title, "nodes", v, Vec::new()));
    }
    if let Some(v) = layers.channel.as_ref().filter(|_| run.realizations <= 1) {
        outs.push(layer("channel", "Server's channel", "", v, Vec::new()));
    }
    let target_pct = sc.weather().target_pct;
    if let Some(a) = &layers.availability {
        let below = outlines(&short_of_target(grid, a, target_pct));
        outs.push(layer("availability", "Availability", AVAILABILITY, a, below));
    }
    // Every layer through every writer, two layers at a time (each writes its own files; at
    // most two layers' pictures and encodings are held at once), listed in layer order.
    let mut per_layer: Vec<Vec<String>> = Vec::with_capacity(outs.len());
    for pair in outs.chunks(2) {
        let done: Vec<Result<Vec<String>, Error>> = pair
            .par_iter()
            .map(|l| {
                let f = write_layer(st, &cx, l);
                bar.inc(1);
                f
            })
            .collect();
        for d in done {
            per_layer.push(d?);
        }
    }
    let mut files: Vec<String> = per_layer[..zones_at].concat();
    if hot.is_some() || low.is_some() {
        files.push("hotspots.geojson".into());
    }
    files.extend(per_layer[zones_at..].concat());
    st.write("layout.geojson", layout_geojson(&sc.nodes).to_string().as_bytes())?;
    files.push("layout.geojson".into());
    let field = site_kmz(sc, &outs, hot.as_deref().unwrap_or_default())
        .map_err(|e| Error::Output { path: st.dir().join("site.kmz"), source: std::io::Error::other(e) })?;
    st.write("site.kmz", &field)?;
    files.push("site.kmz".into());
    files.push("summary.json".into());
    let zones = ZoneCounts { hotspots, outage, sub_cell_zones };
    let summary = summarize(sc, layers, stats, run, zones, files);
    let json = serde_json::to_string_pretty(&summary)
        .map_err(|e| Error::Output { path: st.dir().join("summary.json"), source: e.into() })?;
    st.write("summary.json", json.as_bytes())?;
    bar.finish_and_clear();
    Ok(summary)
}

/// The field file of a map run: the picture layers `map` wrote, nodes with what the
/// installer sets (the install sheet's rows; without magnetic figures where the magnetic
/// model refuses the place or date), links and hot-spot outlines.
fn site_kmz(sc: &Scenario, outs: &[LayerOut], hot: &[crate::jobs::zones::Hotspot]) -> Result<Vec<u8>, String> {
    let pictures: Vec<&LayerOut> = outs.iter().filter(|l| l.picture).collect();
    let rings: Vec<Vec<(f64, f64)>> = hot.iter().flat_map(|h| h.region.rings_lon_lat().into_iter().take(1)).collect();
    let sheet = crate::jobs::install::sheet(sc);
    crate::io::kmz::kmz(sc, &pictures, &rings, sheet.as_ref().map_err(Clone::clone))
}

/// The summary of one tile (its rows' grid, no zones), for the command line's report.
pub(crate) fn tile_summary(
    sc: &Scenario,
    layers: &Layers,
    stats: &LayerStats,
    opts: &MapOptions,
    elapsed_s: f64,
    sub: &crate::geometry::grid::Grid,
) -> Summary {
    let run = RunFacts {
        far_field_db: opts.far_field_db,
        realizations: opts.realizations,
        cutoff_m: opts.cutoff_m,
        elapsed_s,
    };
    let zones = ZoneCounts { hotspots: None, outage: None, sub_cell_zones: 0 };
    summarize(&Scenario { grid: *sub, ..sc.clone() }, layers, stats, &run, zones, Vec::new())
}

/// Zone counts for the summary.
pub(crate) struct ZoneCounts {
    pub(crate) hotspots: Option<usize>,
    pub(crate) outage: Option<usize>,
    pub(crate) sub_cell_zones: usize,
}

/// The summary of a map over `sc.grid` whose layers are `layers` (only which are present is
/// read) with statistics `stats`.
pub(crate) fn summarize(
    sc: &Scenario,
    layers: &Layers,
    stats: &LayerStats,
    run: &RunFacts,
    zones: ZoneCounts,
    files: Vec<String>,
) -> Summary {
    let (grid, noise_dbm, target_pct) = (&sc.grid, sc.noise_dbm(), sc.weather().target_pct);
    let ZoneCounts { hotspots, outage, sub_cell_zones } = zones;
    let b = grid.bbox();
    let (sinr_hist, cov_hist, avail_hist) = (&stats.sinr, &stats.coverage, &stats.availability);
    // The layers written (the server index is left out of ensembles).
    let server_written = layers.server.is_some() && run.realizations <= 1;
    let names: Vec<String> = [
        ("total", layers.total.is_some()),
        ("interference", layers.interference.is_some()),
        ("sinr", layers.sinr.is_some()),
        ("server", server_written),
        ("coverage", layers.coverage.is_some()),
        ("visible", layers.visible.is_some()),
        ("availability", layers.availability.is_some()),
        ("channel", layers.channel.is_some() && run.realizations <= 1),
    ]
    .into_iter()
    .filter(|(_, on)| *on)
    .map(|(n, _)| n.to_string())
    .collect();
    Summary {
        scenario: sc.name.clone(),
        cells: grid.cells(),
        rows: grid.rows(),
        cols: grid.cols(),
        nodes: sc.nodes.len(),
        cell_m: grid.cell_m(),
        bbox: [b.west, b.south, b.east, b.north],
        noise_dbm: round_dp(noise_dbm, 2),
        receiver: if sc.receiver.is_aimed() { "aimed" } else { "omni" }.into(),
        layers: names,
        total_dbm: stats.total.as_ref().map(|h| Spread::of(h, true)),
        interference_dbm: stats.interference.as_ref().map(|h| Spread::of(h, true)),
        sinr_db: sinr_hist.as_ref().map(|h| Spread::of(h, false)),
        sinr_threshold_db: sc.thresholds.sinr_db,
        sinr_ok_fraction: sinr_hist
            .as_ref()
            .and_then(|h| h.fraction_at_least(sc.thresholds.sinr_db))
            .map(|f| (f * 1e6).round() / 1e6),
        hotspots,
        hotspot_i_over_n_db: sc.thresholds.hotspot_i_over_n_db,
        cutoff_m: run.cutoff_m,
        neglected_db: stats.neglected_db.map(|v| round_dp(v, 2)),
        pair_evaluations: stats.pair_evaluations,
        elapsed_s: (run.elapsed_s * 1000.0).round() / 1000.0,
        files,
        coverage: cov_hist.as_ref().map(|h| {
            let r = |x: Option<f64>| x.map(|v| (v / 100.0 * 1e4).round() / 1e4);
            Spread { p10: r(h.quantile(0.1)), p50: r(h.quantile(0.5)), p90: r(h.quantile(0.9)), max: None }
        }),
        coverage_target: sc.thresholds.coverage_target,
        coverage_ok_fraction: cov_hist
            .as_ref()
            .and_then(|h| h.fraction_at_least(sc.thresholds.coverage_target * 100.0))
            .map(|f| (f * 1e6).round() / 1e6),
        coverage_method: layers.coverage.as_ref().map(|_| sc.coverage_model(noise_dbm).method.name().to_string()),
        outage_zones: outage,
        sub_cell_zones,
        availability_pct: avail_hist.as_ref().map(|h| {
            // The histogram holds −10 log10(100 − A): its low quantiles are the low availabilities.
            // Cells without a margin (0 %) sit in the bin at −20.
            let back =
                |v: Option<f64>| v.map(|v| if v < -19.9 { 0.0 } else { round_dp(100.0 - 10f64.powf(-v / 10.0), 4) });
            Spread { p10: back(h.quantile(0.1)), p50: back(h.quantile(0.5)), p90: back(h.quantile(0.9)), max: None }
        }),
        availability_target_pct: layers.availability.as_ref().map(|_| target_pct),
        availability_ok_fraction: layers.availability.as_ref().and_then(|_| {
            let (served, ok) = (stats.availability_served, stats.availability_ok);
            (served > 0).then(|| round_dp(ok as f64 / served as f64, 6))
        }),
        channels: layers.channel.as_ref().map(|_| sc.spectrum().channels.iter().map(|c| c.name.clone()).collect()),
        realizations: sc.draw.as_ref().map(|_| run.realizations.max(1)),
        drawn_nodes: sc.draw.as_ref().map(|_| sc.nodes.iter().filter(|n| n.id.starts_with("draw-")).count()),
        far_field_db: run.far_field_db,
        far_field_bound_db: stats.far_field_bound_db.map(|v| (v * 1000.0).ceil() / 1000.0),
    }
}

/// Regions a terminal is served in clear air (availability above 0) but short of the
/// availability target: what the availability layer outlines.
pub fn short_of_target(
    grid: &crate::geometry::grid::Grid,
    a: &[f32],
    target_pct: f64,
) -> Vec<crate::geometry::regions::Region> {
    let served: Vec<f32> = a.iter().map(|&v| if v > 0.0 { v } else { crate::NODATA }).collect();
    regions(grid, &served, target_pct as f32, true)
}

/// Runs the engine over `n` drawn layouts (seeds seed, seed+1, …) and averages: `total` and
/// `interference` as ensemble means in mW, `sinr` as the mean of its dB values, `coverage` as
/// the mean probability, `availability` as the mean percentage; `server` is
/// left out when n > 1. Returns the layers and the scenario with the first drawn layout.
fn ensemble(
    sc: &Scenario,
    spec: &crate::model::draw::DrawSpec,
    run: &dyn Fn(&Engine<'_>) -> Layers,
    n: usize,
    progress: bool,
) -> (Layers, Scenario) {
    let first = Scenario { nodes: crate::random::layout::layout(sc, spec, spec.seed), ..sc.clone() };
    let bar = if progress && n > 1 {
        crate::progress::styled("drawn layouts", n as u64, "realisations")
    } else {
        indicatif::ProgressBar::hidden()
    };
    let mut acc = run(&Engine::new(&first));
    bar.inc(1);
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
    acc.channel = None;
    for i in 1..n {
        let sci = Scenario { nodes: crate::random::layout::layout(sc, spec, spec.seed + i as u64), ..sc.clone() };
        let mut l = run(&Engine::new(&sci));
        for (a, b) in [(&mut acc.total, &mut l.total), (&mut acc.interference, &mut l.interference)] {
            if let (Some(a), Some(b)) = (a, b) {
                to_mw(b);
                a.iter_mut().zip(b.iter()).for_each(|(x, y)| *x += *y);
            }
        }
        for (a, b) in
            [(&mut acc.sinr, &l.sinr), (&mut acc.coverage, &l.coverage), (&mut acc.availability, &l.availability)]
        {
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
        acc.far_field_bound_db = match (acc.far_field_bound_db, l.far_field_bound_db) {
            (Some(a), Some(b)) => Some(a.max(b)),
            (a, b) => a.or(b),
        };
        bar.inc(1);
    }
    bar.finish_and_clear();
    let nf = n as f32;
    for l in [&mut acc.total, &mut acc.interference].into_iter().flatten() {
        l.iter_mut().for_each(|x| *x = if *x > 0.0 { mw_to_dbm((*x / nf) as f64) as f32 } else { crate::NODATA });
    }
    for s in [&mut acc.sinr, &mut acc.coverage, &mut acc.availability].into_iter().flatten() {
        s.iter_mut().filter(|x| **x != crate::NODATA).for_each(|x| *x /= nf);
    }
    (acc, first)
}
