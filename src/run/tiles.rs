//! Tiled maps: `map --tile K/N` computes rows [K·R/N, (K+1)·R/N) of the grid's R rows into
//! the folder `tile-K-of-N` under `--out`, with a manifest (`tile.json`) holding what the
//! merge needs: the grid, the rows, the layers, the input files' SHA-256 and the layers'
//! histograms and counts (`LayerStats`). `merge` ([`crate::run::merge`]) joins the tiles.
//!
//! Tiles are blocks of whole rows because rows are the engine's unit of work: a tile's cells
//! are computed by the same row code with the same candidate nodes as in one run over the
//! grid, so their values are the same bits. Over a surface a tile sweeps every band of the
//! whole run it meets ([`crate::engine::Engine::run_rows`]).

use crate::engine::Layers;
use crate::error::{Error, Problem};
use crate::geometry::grid::Grid;
use crate::io::staging::Staging;
use crate::model::scenario::Scenario;
use crate::run::map::{LayerStats, MapOptions, MapResult, compute};
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};
use std::time::Instant;

/// The environment variables a scheduler sets to a job-array task's index, in the order
/// read: Slurm job arrays, Kubernetes Indexed Jobs.
pub const INDEX_VARIABLES: [&str; 2] = ["SLURM_ARRAY_TASK_ID", "JOB_COMPLETION_INDEX"];

/// Manifest file of a tile folder.
pub const MANIFEST: &str = "tile.json";

/// One tile of N.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Tile {
    /// Index, 0 to count − 1.
    pub index: usize,
    /// Number of tiles.
    pub count: usize,
}

impl Tile {
    /// Parses `K/N`, or `array/N` with K from the scheduler's variables ([`INDEX_VARIABLES`],
    /// read through `var`). The message names the value and the allowed forms.
    pub fn parse(s: &str, var: impl Fn(&str) -> Option<String>) -> Result<Tile, String> {
        let form = "the allowed forms are K/N (0 <= K < N <= 100000) and array/N (K from $SLURM_ARRAY_TASK_ID or $JOB_COMPLETION_INDEX)";
        let (k, n) = s.split_once('/').ok_or(format!("value `{s}` is not a tile; {form}"))?;
        let n: usize = n.trim().parse().map_err(|_| format!("value `{s}` has no tile count N; {form}"))?;
        if !(1..=100_000).contains(&n) {
            return Err(format!("value `{s}`: tile count {n} is outside the allowed range [1, 100000]"));
        }
        let k = match k.trim() {
            "array" => {
                let set: Vec<(&str, String)> = INDEX_VARIABLES.iter().filter_map(|v| var(v).map(|x| (*v, x))).collect();
                let (name, value) = set.first().ok_or(format!(
                    "value `{s}` takes the tile index from the scheduler, but neither {} is set",
                    INDEX_VARIABLES.join(" nor ")
                ))?;
                if let Some((other, v2)) = set.get(1)
                    && v2 != value
                {
                    return Err(format!("{name} = {value} and {other} = {v2} disagree on the tile index"));
                }
                value.trim().parse::<usize>().map_err(|_| format!("{name} = `{value}` is not a tile index"))?
            }
            k => k.parse().map_err(|_| format!("value `{s}` has no tile index K; {form}"))?,
        };
        if k >= n {
            return Err(format!("tile index {k} is outside the allowed range [0, {}] for {n} tiles", n - 1));
        }
        Ok(Tile { index: k, count: n })
    }

    /// The grid rows of this tile for a grid of `rows` rows.
    pub fn rows(&self, rows: usize) -> std::ops::Range<usize> {
        (self.index * rows / self.count)..((self.index + 1) * rows / self.count)
    }

    /// The tile's folder name.
    pub fn folder(&self) -> String {
        format!("tile-{}-of-{}", self.index, self.count)
    }
}

/// The grid of a map, as the manifest records it (the merge checks that every tile has it).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub(crate) struct GridFacts {
    pub(crate) rows: usize,
    pub(crate) cols: usize,
    pub(crate) cell_m: f64,
    /// West, south, east, north, degrees.
    pub(crate) bbox: [f64; 4],
}

impl GridFacts {
    pub(crate) fn of(g: &Grid) -> GridFacts {
        let b = g.bbox();
        GridFacts { rows: g.rows(), cols: g.cols(), cell_m: g.cell_m(), bbox: [b.west, b.south, b.east, b.north] }
    }
}

/// `tile.json`.
#[derive(Clone, Serialize, Deserialize)]
pub(crate) struct Manifest {
    /// lobemap's version that computed the tile.
    pub(crate) lobemap: String,
    /// The scenario file, absolute.
    pub(crate) scenario: PathBuf,
    /// SHA-256 of every input file (the scenario, nodes, draw areas, surface), hex.
    pub(crate) inputs_sha256: Vec<(PathBuf, String)>,
    pub(crate) tile: usize,
    pub(crate) tiles: usize,
    /// The tile's rows of the grid, [start, end).
    pub(crate) rows: [usize; 2],
    pub(crate) grid: GridFacts,
    /// The layers computed (file stems; each is `<stem>.tif` in the tile folder).
    pub(crate) layers: Vec<String>,
    pub(crate) realizations: usize,
    pub(crate) cutoff_m: Option<f64>,
    /// The far-field tolerance, dB.
    #[serde(default)]
    pub(crate) far_field_db: Option<f64>,
    /// Computation time of the tile, s.
    pub(crate) elapsed_s: f64,
    pub(crate) stats: LayerStats,
}

/// SHA-256 of every input file of a scenario.
pub(crate) fn input_hashes(sc: &Scenario) -> Result<Vec<(PathBuf, String)>, Error> {
    use sha2::Digest;
    sc.input_files()
        .into_iter()
        .map(|p| {
            let bytes = std::fs::read(p).map_err(|e| Error::Read { path: p.to_path_buf(), source: e })?;
            let hex = sha2::Sha256::digest(&bytes).iter().map(|b| format!("{b:02x}")).collect();
            Ok((std::fs::canonicalize(p).unwrap_or_else(|_| p.to_path_buf()), hex))
        })
        .collect()
}

/// The layers of a map by file stem, in the order the map writes them.
pub(crate) fn named_layers(l: &Layers) -> Vec<(&'static str, &Vec<f32>)> {
    [
        ("total", &l.total),
        ("interference", &l.interference),
        ("sinr", &l.sinr),
        ("server", &l.server),
        ("coverage", &l.coverage),
        ("visible", &l.visible),
        ("availability", &l.availability),
        ("channel", &l.channel),
    ]
    .into_iter()
    .filter_map(|(n, v)| v.as_ref().map(|v| (n, v)))
    .collect()
}

/// Runs one tile of the map into `opts.out/tile-K-of-N/`: a float32 GeoTIFF per layer over
/// the tile's rows and the manifest.
pub(crate) fn run_tile(sc: &Scenario, opts: &MapOptions, tile: Tile) -> Result<MapResult, Error> {
    let grid_rows = sc.grid.rows();
    if tile.count > grid_rows {
        return Err(Error::input(Problem::flag(
            "--tile",
            format!(
                "{} tiles are more than the grid's {grid_rows} rows; the allowed range is [1, {grid_rows}]",
                tile.count
            ),
        )));
    }
    let span = tile.rows(grid_rows);
    crate::run::map::check_memory_rows(sc, opts.layers.count(), opts.max_memory_mib, span.len())?;
    let sub = sc.grid.rows_span(span.clone());
    // Every tile of a job array writes under the same --out: the shared parent is made first.
    std::fs::create_dir_all(&opts.out).map_err(|e| Error::Output { path: opts.out.clone(), source: e })?;
    let dir = opts.out.join(tile.folder());
    let owned = crate::run::map::MAP_STEMS.iter().map(|s| format!("{s}.tif")).chain([MANIFEST.to_string()]).collect();
    let st = Staging::folder(&dir, &sc.input_files(), owned)?;
    let t0 = Instant::now();
    // An ensemble leaves the server index out, as in `map`.
    let (layers, used) = compute(sc, opts, span.clone());
    let elapsed_s = t0.elapsed().as_secs_f64();
    let stats = LayerStats::of(&layers, used.weather().target_pct);
    let mut names = Vec::new();
    for (name, data) in named_layers(&layers) {
        let file = format!("{name}.tif");
        st.write_with(&file, |w| crate::io::geotiff::write_geotiff(w, &sub, data).map_err(std::io::Error::other))?;
        names.push(name.to_string());
    }
    let manifest = Manifest {
        lobemap: env!("CARGO_PKG_VERSION").into(),
        scenario: std::fs::canonicalize(&sc.path).unwrap_or_else(|_| sc.path.clone()),
        inputs_sha256: input_hashes(sc)?,
        tile: tile.index,
        tiles: tile.count,
        rows: [span.start, span.end],
        grid: GridFacts::of(&sc.grid),
        layers: names,
        realizations: opts.realizations,
        cutoff_m: opts.cutoff_m,
        far_field_db: opts.far_field_db,
        elapsed_s,
        stats,
    };
    let json =
        serde_json::to_string(&manifest).map_err(|e| Error::Output { path: dir.join(MANIFEST), source: e.into() })?;
    st.write(MANIFEST, json.as_bytes())?;
    let files = st.commit()?;
    let summary = crate::run::map::tile_summary(&used, &layers, &manifest.stats, opts, elapsed_s, &sub);
    Ok(MapResult { summary, layers, files, write_s: t0.elapsed().as_secs_f64() - elapsed_s })
}

/// Every tile folder in `dirs`: a folder holding a manifest, or a folder whose
/// `tile-*` subfolders do.
pub(crate) fn tile_folders(dirs: &[PathBuf]) -> Result<Vec<PathBuf>, Error> {
    let mut out = Vec::new();
    for d in dirs {
        if d.join(MANIFEST).is_file() {
            out.push(d.clone());
            continue;
        }
        let entries = std::fs::read_dir(d).map_err(|e| Error::Read { path: d.clone(), source: e })?;
        let mut found: Vec<PathBuf> = entries
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| p.file_name().and_then(|n| n.to_str()).is_some_and(|n| n.starts_with("tile-")))
            .filter(|p| p.join(MANIFEST).is_file())
            .collect();
        if found.is_empty() {
            return Err(Error::input(Problem::new(
                d.display().to_string(),
                None,
                MANIFEST,
                format!(
                    "no {MANIFEST} in the folder or in tile-* folders inside it: give the --out folder of `map --tile` runs or a tile folder"
                ),
            )));
        }
        found.sort();
        out.extend(found);
    }
    Ok(out)
}

/// Reads a tile folder's manifest.
pub(crate) fn read_manifest(dir: &Path) -> Result<Manifest, Error> {
    let p = dir.join(MANIFEST);
    let text = std::fs::read_to_string(&p).map_err(|e| Error::Read { path: p.clone(), source: e })?;
    serde_json::from_str(&text).map_err(|e| {
        Error::input(Problem::new(p.display().to_string(), None, MANIFEST, format!("not a lobemap tile manifest: {e}")))
    })
}
