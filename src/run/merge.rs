//! `merge`: joins the tiles of `map --tile K/N` runs into the outputs of one map. Per layer a
//! GDAL VRT over the tiles' GeoTIFFs (`<layer>.vrt`, no pixel copied) and, from the layer
//! assembled in memory, every file `map` writes: GeoTIFF, heatmap, hot spots across tile
//! edges, layout and summary. The summary's percentiles come from the tiles' merged
//! histograms (`LayerStats::merge` in `run::map`), so they are those of the whole map.
//! Tiles must come from the same inputs (SHA-256 in each manifest) and cover the grid once.

use crate::engine::Layers;
use crate::error::{Error, Problem};
use crate::io::staging::Staging;
use crate::io::vrt::{Source, vrt};
use crate::model::scenario::Scenario;
use crate::run::map::{LayerStats, RunFacts, check_memory, map_file_names, write_map};
use crate::run::tiles::{GridFacts, MANIFEST, Manifest, input_hashes, read_manifest, tile_folders};
use std::path::{Path, PathBuf};

/// Options of the merge.
#[derive(Debug, Clone)]
pub struct MergeOptions {
    /// Folders holding tiles (a tile folder, or the `--out` folder of tile runs).
    pub dirs: Vec<PathBuf>,
    /// Output folder.
    pub out: PathBuf,
    /// Memory limit for the assembled layers, MiB.
    pub max_memory_mib: u64,
}

/// What the merge produced.
pub struct MergeResult {
    /// The merged map's summary (as `map` would write it; `elapsed_s` is the tiles' sum).
    pub summary: crate::io::summary::Summary,
    /// Tiles merged.
    pub tiles: usize,
    /// Paths written.
    pub files: Vec<PathBuf>,
}

/// Checks that the tiles belong together and cover the grid once; every disagreement is a
/// problem naming the tile's manifest.
fn check_tiles(tiles: &[(PathBuf, Manifest)]) -> Result<(), Error> {
    let mut problems = Vec::new();
    let first = &tiles[0].1;
    let at = |d: &Path| d.join(MANIFEST).display().to_string();
    let mut seen = vec![None::<&PathBuf>; first.tiles];
    for (d, m) in tiles {
        let mut differ = |field: &str, what: String| {
            problems.push(Problem::new(
                at(d),
                None,
                field,
                format!("{what}, but {} has {}: merge only tiles of one run", at(&tiles[0].0), field_of(first, field)),
            ))
        };
        if m.tiles != first.tiles {
            differ("tiles", format!("value {}", m.tiles));
        }
        if m.grid != first.grid {
            differ("grid", format!("value {:?}", m.grid));
        }
        if m.layers != first.layers {
            differ("layers", format!("value {:?}", m.layers));
        }
        if m.inputs_sha256 != first.inputs_sha256 {
            differ("inputs_sha256", "the inputs differ".into());
        }
        if (m.realizations, m.cutoff_m, m.far_field_db) != (first.realizations, first.cutoff_m, first.far_field_db) {
            differ(
                "realizations",
                format!("realizations {}, cutoff {:?} and far field {:?}", m.realizations, m.cutoff_m, m.far_field_db),
            );
        }
        if m.tiles != first.tiles {
            continue;
        }
        let expect = crate::run::tiles::Tile { index: m.tile, count: m.tiles }.rows(first.grid.rows);
        if m.tile >= m.tiles || m.rows != [expect.start, expect.end] {
            problems.push(Problem::new(
                at(d),
                None,
                "rows",
                format!(
                    "tile {} of {} holds rows {:?}; expected [{}, {})",
                    m.tile, m.tiles, m.rows, expect.start, expect.end
                ),
            ));
            continue;
        }
        match seen[m.tile] {
            Some(other) => problems.push(Problem::new(
                at(d),
                None,
                "tile",
                format!("tile {} of {} is also in {}: give each tile once", m.tile, m.tiles, other.display()),
            )),
            None => seen[m.tile] = Some(d),
        }
    }
    let missing: Vec<String> = (0..first.tiles).filter(|k| seen[*k].is_none()).map(|k| k.to_string()).collect();
    if problems.is_empty() && !missing.is_empty() {
        problems.push(Problem::flag(
            "DIR",
            format!(
                "tile(s) {} of {} are missing: run `lobemap map SCENARIO --tile K/{} --out DIR` for each",
                missing.join(", "),
                first.tiles,
                first.tiles
            ),
        ));
    }
    if problems.is_empty() { Ok(()) } else { Err(Error::Input(problems)) }
}

fn field_of(m: &Manifest, field: &str) -> String {
    match field {
        "tiles" => m.tiles.to_string(),
        "grid" => format!("{:?}", m.grid),
        "layers" => format!("{:?}", m.layers),
        "realizations" => {
            format!("realizations {}, cutoff {:?} and far field {:?}", m.realizations, m.cutoff_m, m.far_field_db)
        }
        _ => "other inputs".into(),
    }
}

/// Reads a tile's layer (float32 GeoTIFF of `rows` × `cols`).
fn read_layer(path: &Path, rows: usize, cols: usize) -> Result<Vec<f32>, Error> {
    let bad = |m: String| Error::input(Problem::new(path.display().to_string(), None, "raster", m));
    let f = std::fs::File::open(path).map_err(|e| Error::Read { path: path.to_path_buf(), source: e })?;
    let mut dec = tiff::decoder::Decoder::new(std::io::BufReader::new(f))
        .map_err(|e| bad(format!("not a readable TIFF: {e}")))?;
    let (w, h) = dec.dimensions().map_err(|e| bad(format!("no dimensions: {e}")))?;
    if (w as usize, h as usize) != (cols, rows) {
        return Err(bad(format!("{w} x {h} pixels; the manifest says {cols} x {rows}")));
    }
    match dec.read_image().map_err(|e| bad(format!("cannot decode: {e}")))? {
        tiff::decoder::DecodingResult::F32(v) => Ok(v),
        _ => Err(bad("not float32; lobemap tiles are float32".into())),
    }
}

/// Merges the tiles in `opts.dirs` into `opts.out`.
pub fn run_merge(opts: &MergeOptions) -> Result<MergeResult, Error> {
    let folders = tile_folders(&opts.dirs)?;
    let tiles: Vec<(PathBuf, Manifest)> =
        folders.into_iter().map(|d| read_manifest(&d).map(|m| (d, m))).collect::<Result<_, _>>()?;
    check_tiles(&tiles)?;
    let first = tiles[0].1.clone();
    let sc = Scenario::load(&first.scenario)?;
    let now = input_hashes(&sc)?;
    if now != first.inputs_sha256 {
        let changed: Vec<String> =
            now.iter().filter(|x| !first.inputs_sha256.contains(x)).map(|(p, _)| p.display().to_string()).collect();
        return Err(Error::input(Problem::new(
            first.scenario.display().to_string(),
            None,
            "inputs_sha256",
            format!(
                "input file(s) {} changed since the tiles were computed: rerun the tiles",
                if changed.is_empty() { "(the list of inputs)".to_string() } else { changed.join(", ") }
            ),
        )));
    }
    if GridFacts::of(&sc.grid) != first.grid {
        return Err(Error::input(Problem::new(
            first.scenario.display().to_string(),
            Some("[grid]".into()),
            "grid",
            "the scenario's grid is not the tiles' grid: rerun the tiles".to_string(),
        )));
    }
    let out_c = std::fs::canonicalize(&opts.out).ok();
    for (d, _) in &tiles {
        let d = std::fs::canonicalize(d).unwrap_or_else(|_| d.clone());
        if out_c.as_ref().is_some_and(|o| d.starts_with(o) || o.starts_with(&d)) {
            return Err(Error::input(Problem::flag(
                "--out",
                format!(
                    "folder {} holds or is inside tile folder {}: choose a folder of its own",
                    opts.out.display(),
                    d.display()
                ),
            )));
        }
    }
    check_memory(&sc, first.layers.len(), opts.max_memory_mib)?;
    let mut order: Vec<&(PathBuf, Manifest)> = tiles.iter().collect();
    order.sort_by_key(|(_, m)| m.tile);
    let (rows, cols) = (sc.grid.rows(), sc.grid.cols());
    let mut layers = Layers::default();
    let mut stats = LayerStats::default();
    let mut elapsed_s = 0.0;
    for (_, m) in &order {
        stats.merge(&m.stats);
        elapsed_s += m.elapsed_s;
    }
    layers.pair_evaluations = stats.pair_evaluations;
    let mut vrts = Vec::new();
    for name in &first.layers {
        let mut data = vec![0f32; rows * cols];
        let mut sources = Vec::new();
        for (d, m) in &order {
            let path =
                std::fs::canonicalize(d.join(format!("{name}.tif"))).unwrap_or_else(|_| d.join(format!("{name}.tif")));
            let n = m.rows[1] - m.rows[0];
            data[m.rows[0] * cols..m.rows[1] * cols].copy_from_slice(&read_layer(&path, n, cols)?);
            sources.push(Source { path, first_row: m.rows[0], rows: n });
        }
        vrts.push((format!("{name}.vrt"), vrt(&sc.grid, name, &sources)));
        let slot = match name.as_str() {
            "total" => &mut layers.total,
            "interference" => &mut layers.interference,
            "sinr" => &mut layers.sinr,
            "server" => &mut layers.server,
            "coverage" => &mut layers.coverage,
            "visible" => &mut layers.visible,
            "availability" => &mut layers.availability,
            "channel" => &mut layers.channel,
            other => {
                return Err(Error::input(Problem::new(
                    d_of(&order[0].0),
                    None,
                    "layers",
                    format!("unknown layer `{other}`; allowed: {}", crate::engine::LayerSet::NAMES),
                )));
            }
        };
        *slot = Some(data);
    }
    let used = match &sc.draw {
        None => sc.clone(),
        Some(spec) => Scenario { nodes: crate::random::layout::layout(&sc, spec, spec.seed), ..sc.clone() },
    };
    let mut owned = map_file_names();
    owned.extend(crate::run::map::MAP_STEMS.iter().map(|s| format!("{s}.vrt")));
    let st = Staging::folder(&opts.out, &sc.input_files(), owned)?;
    for (name, xml) in &vrts {
        st.write(name, xml.as_bytes())?;
    }
    let run = RunFacts {
        far_field_db: first.far_field_db,
        realizations: first.realizations,
        cutoff_m: first.cutoff_m,
        elapsed_s,
    };
    let summary = write_map(&st, &used, &layers, &stats, &run)?;
    let files = st.commit()?;
    Ok(MergeResult { summary, tiles: tiles.len(), files })
}

fn d_of(d: &Path) -> String {
    d.join(MANIFEST).display().to_string()
}
