//! The surface on the map path: node-cell evaluations per second with obstruction, against
//! the same map over flat ground, and the visibility computation against `gdal_viewshed`
//! (Debian gdal-bin) run once per node on the same ground model and observers.
//!
//! `cargo bench --bench surface` (`-- --quick`: 20 nodes and 10 GDAL runs; `-- --nodes N`).
//! Invented smooth hills on a 1 m grid of 1000 × 1000 cells, sector nodes (30°, 20/−5 dBi,
//! 10 m above the ground) at seeded positions, receiver 2 m above the ground. Needs
//! gdal_translate to write the ground model; without GDAL it says so and stops.

use lobemap::engine::{Engine, LayerSet, Options};
use lobemap::geometry::grid::{BBox, Grid};
use lobemap::model::scenario::Scenario;
use rand::{RngExt, SeedableRng};
use std::process::Command;
use std::time::Instant;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let quick = args.iter().any(|a| a == "--quick");
    let nodes: usize = args
        .iter()
        .position(|a| a == "--nodes")
        .and_then(|i| args.get(i + 1))
        .and_then(|v| v.parse().ok())
        .unwrap_or(if quick { 20 } else { 200 });
    if Command::new("gdal_translate").arg("--version").output().is_err() {
        println!(
            "gdal_translate not installed (Debian gdal-bin): the surface bench needs it to write the ground model"
        );
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let bbox = BBox { west: 7.0, south: 46.0, east: 7.01295, north: 46.009 };
    let grid = Grid::new(bbox, 1.0).unwrap();
    let (rows, cols) = (grid.rows(), grid.cols());
    let n = rows.max(cols) as f64;
    let mut asc = format!(
        "ncols {cols}\nnrows {rows}\nxllcorner {}\nyllcorner {}\ndx {}\ndy {}\n",
        grid.bbox().west,
        grid.bbox().south,
        grid.dlon(),
        grid.dlat()
    );
    for r in 0..rows {
        let line: Vec<String> = (0..cols)
            .map(|c| {
                let (x, y) = (c as f64 / n, r as f64 / n);
                let b = |x0: f64, y0: f64, h: f64, w: f64| h * (-((x - x0).powi(2) + (y - y0).powi(2)) / (w * w)).exp();
                format!(
                    "{:.2}",
                    b(0.3, 0.35, 30.0, 0.08) + b(0.7, 0.6, 22.0, 0.12) + 3.0 * (9.0 * x).sin() * (7.0 * y).cos()
                )
            })
            .collect();
        asc += &line.join(" ");
        asc += "\n";
    }
    std::fs::write(d.path().join("dem.asc"), asc).unwrap();
    let dem = d.path().join("dem.tif");
    let o = Command::new("gdal_translate")
        .args(["-q", "-a_srs", "EPSG:4326", "-ot", "Float32"])
        .arg(d.path().join("dem.asc"))
        .arg(&dem)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let mut rng = rand_pcg::Pcg64::seed_from_u64(5);
    let mut sites = Vec::new();
    let feats: Vec<String> = (0..nodes)
        .map(|i| {
            let (r, c) = (rng.random_range(0..rows), rng.random_range(0..cols));
            let (lon, lat) = (grid.lon_of_col(c), grid.lat_of_row(r));
            sites.push((lon, lat));
            format!(
                r#"{{"type":"Feature","geometry":{{"type":"Point","coordinates":[{lon},{lat}]}},"properties":{{"id":"N{i}","azimuth_deg":{}}}}}"#,
                rng.random_range(0.0..360.0)
            )
        })
        .collect();
    std::fs::write(
        d.path().join("nodes.geojson"),
        format!(r#"{{"type":"FeatureCollection","features":[{}]}}"#, feats.join(",")),
    )
    .unwrap();
    let scenario = d.path().join("s.toml");
    std::fs::write(
        &scenario,
        format!(
            "name = \"hills\"\nnodes = \"nodes.geojson\"\n[radio]\nfrequency_ghz = 28\nbandwidth_mhz = 400\nnoise_figure_db = 7\n[propagation]\nmodel = \"free-space\"\n[antenna]\npattern = \"sector\"\nbeamwidth_deg = 30\ngain_dbi = 20\nsidelobe_dbi = -5\npower_dbm = 20\nheight_m = 10\nactivity = 1\n[receiver]\nheight_m = 2\n[grid]\ncell_m = 1\nbbox = [{}, {}, {}, {}]\n[surface]\nground = \"dem.tif\"\nearth_k = 1000000\n",
            bbox.west, bbox.south, bbox.east, bbox.north
        ),
    )
    .unwrap();
    let sc = Scenario::load(&scenario).unwrap();
    let cells = sc.grid().cells();
    println!("{nodes} nodes over {} x {} = {cells} cells of 1 m, {} threads", cols, rows, rayon::current_num_threads());
    let time = |sc: &Scenario, layers: LayerSet| {
        let eng = Engine::new(sc);
        let t0 = Instant::now();
        let l = eng.run(&Options { layers, cutoff_m: None, progress: false });
        (t0.elapsed().as_secs_f64(), l)
    };
    let flat = sc.clone().with_surface(None);
    let (t_flat, _) = time(&flat, LayerSet::TOTAL);
    let (t_obs, _) = time(&sc, LayerSet::TOTAL);
    let (t_vis, _) = time(&sc, LayerSet { visible: true, total: false, ..LayerSet::TOTAL });
    let pairs = (nodes * cells) as f64;
    println!("total, flat ground:        {t_flat:>7.2} s  {:.3e} pairs/s", pairs / t_flat);
    println!("total, with obstruction:   {t_obs:>7.2} s  {:.3e} pairs/s", pairs / t_obs);
    println!("visible only (the sweeps): {t_vis:>7.2} s  {:.3e} pairs/s", pairs / t_vis);
    if Command::new("gdal_viewshed").arg("--version").output().is_ok_and(|o| !o.stdout.is_empty()) {
        let runs = if quick { nodes.min(10) } else { nodes };
        let t0 = Instant::now();
        for (k, (lon, lat)) in sites.iter().take(runs).enumerate() {
            let o = Command::new("gdal_viewshed")
                .args(["-q", "-oz", "10", "-tz", "2", "-cc", "0", "-ox", &lon.to_string(), "-oy", &lat.to_string()])
                .arg(&dem)
                .arg(d.path().join(format!("vs{}.tif", k % 2)))
                .output()
                .unwrap();
            assert!(o.status.success());
        }
        let per = t0.elapsed().as_secs_f64() / runs as f64;
        println!(
            "gdal_viewshed once per node: {:.3} s a node ({runs} runs), {:.2} s for {nodes} nodes: lobemap's visible layer is {:.1}x faster",
            per,
            per * nodes as f64,
            per * nodes as f64 / t_vis
        );
    } else {
        println!("gdal_viewshed not installed: no comparison");
    }
}
