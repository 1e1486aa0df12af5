//! Command-line front end: parses, validates and calls the library.

use clap::{Parser, Subcommand};
use lobemap::engine::LayerSet;
use lobemap::error::{Error, Problem};
use lobemap::probe::probe;
use lobemap::run::{MapOptions, run_map};
use lobemap::scenario::Scenario;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// Interference, SINR and coverage maps for directional wireless nodes.
#[derive(Parser)]
#[command(name = "lobemap", version, about)]
struct Cli {
    #[command(subcommand)]
    cmd: Cmd,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long, global = true)]
    threads: Option<usize>,
    /// No progress bar or chatter on stderr.
    #[arg(long, global = true)]
    quiet: bool,
}

#[derive(Subcommand)]
enum Cmd {
    /// Compute the layers of a scenario and write GeoTIFFs, PNGs, hot spots and a summary.
    Map {
        /// Scenario file (TOML).
        scenario: PathBuf,
        #[command(flatten)]
        map: MapArgs,
    },
    /// Break down the signal at one point, node by node.
    Probe {
        /// Scenario file (TOML).
        scenario: PathBuf,
        /// The point, as LAT,LON in degrees.
        #[arg(long, value_name = "LAT,LON", allow_hyphen_values = true)]
        at: String,
        /// Print JSON instead of a table.
        #[arg(long)]
        json: bool,
    },
    /// Validate a scenario and its node file; list every problem.
    Check {
        /// Scenario file (TOML).
        scenario: PathBuf,
        /// Memory limit for a full map of this scenario (MiB).
        #[arg(long, default_value_t = 8192)]
        max_memory_mib: u64,
    },
    /// Run the map on the bundled demo scenario.
    Demo {
        #[command(flatten)]
        map: MapArgs,
    },
}

#[derive(clap::Args)]
struct MapArgs {
    /// Output folder (default: outputs/<scenario name>/, or outputs/demo/ for the demo).
    #[arg(long)]
    out: Option<PathBuf>,
    /// Layers to compute and write, comma-separated: total, interference, sinr, server.
    #[arg(long, default_value = "total,interference,sinr,server")]
    layers: String,
    /// Skip nodes farther than this from a grid row (m); the dropped power is bounded and
    /// reported as `neglected_db` in summary.json.
    #[arg(long)]
    cutoff_m: Option<f64>,
    /// Refuse grids whose layers need more memory than this (MiB).
    #[arg(long, default_value_t = 8192)]
    max_memory_mib: u64,
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(code) => code,
        Err(e) => match e.downcast_ref::<Error>() {
            Some(_) => {
                eprintln!("error: {e}");
                ExitCode::from(2)
            }
            None => {
                eprintln!("error: {e:#}");
                ExitCode::from(1)
            }
        },
    }
}

fn bad_flag(flag: &str, msg: String) -> anyhow::Error {
    Error::input(Problem::new("(command line)", None, flag, msg)).into()
}

fn run(cli: Cli) -> anyhow::Result<ExitCode> {
    if let Some(t) = cli.threads {
        if t == 0 || t > 1024 {
            return Err(bad_flag("--threads", format!("value {t} is outside the allowed range [1, 1024]")));
        }
        rayon::ThreadPoolBuilder::new().num_threads(t).build_global()?;
    }
    match cli.cmd {
        Cmd::Map { scenario, map } => {
            let sc = Scenario::load(&scenario)?;
            map_cmd(&sc, map, cli.quiet, None)
        }
        Cmd::Demo { map } => {
            let path = demo_scenario()?;
            let sc = Scenario::load(&path)?;
            map_cmd(&sc, map, cli.quiet, Some("outputs/demo"))
        }
        Cmd::Check { scenario, max_memory_mib } => match Scenario::load(&scenario) {
            Ok(sc) => {
                lobemap::run::check_memory(&sc, 4, max_memory_mib)?;
                println!(
                    "{}: ok: {} nodes, grid {} x {} cells of {} m, noise {:.2} dBm",
                    scenario.display(),
                    sc.nodes.len(),
                    sc.grid.cols(),
                    sc.grid.rows(),
                    sc.grid.cell_m(),
                    sc.noise_dbm()
                );
                Ok(ExitCode::SUCCESS)
            }
            Err(e) => Err(e.into()),
        },
        Cmd::Probe { scenario, at, json } => {
            let (lat, lon) = parse_lat_lon(&at)?;
            let sc = Scenario::load(&scenario)?;
            let p = probe(&sc, lat, lon);
            if json {
                println!("{}", serde_json::to_string_pretty(&p)?);
            } else {
                print!("{}", p.to_table());
            }
            Ok(ExitCode::SUCCESS)
        }
    }
}

fn parse_lat_lon(s: &str) -> anyhow::Result<(f64, f64)> {
    let parts: Vec<&str> = s.split(',').map(str::trim).collect();
    let nums: Vec<f64> = parts.iter().filter_map(|p| p.parse().ok()).collect();
    if parts.len() != 2 || nums.len() != 2 {
        return Err(bad_flag("--at", format!("value `{s}` is not LAT,LON in degrees (e.g. --at 54.73,-3.21)")));
    }
    let (lat, lon) = (nums[0], nums[1]);
    let ok = lat.is_finite() && (-85.0..=85.0).contains(&lat) && lon.is_finite() && (-180.0..=180.0).contains(&lon);
    if !ok {
        return Err(bad_flag(
            "--at",
            format!("value `{s}`: latitude must lie in [-85, 85] and longitude in [-180, 180]"),
        ));
    }
    Ok((lat, lon))
}

fn map_cmd(sc: &Scenario, a: MapArgs, quiet: bool, default_out: Option<&str>) -> anyhow::Result<ExitCode> {
    let layers = LayerSet::parse(&a.layers).map_err(|m| bad_flag("--layers", m))?;
    if let Some(c) = a.cutoff_m
        && !(c.is_finite() && c > 0.0)
    {
        return Err(bad_flag("--cutoff-m", format!("value {c} is outside the allowed range (0, inf) m")));
    }
    let out =
        a.out.unwrap_or_else(|| PathBuf::from(default_out.map(String::from).unwrap_or(format!("outputs/{}", sc.name))));
    let res = run_map(
        sc,
        &MapOptions {
            out: out.clone(),
            layers,
            cutoff_m: a.cutoff_m,
            max_memory_mib: a.max_memory_mib,
            progress: !quiet,
        },
    )?;
    if !quiet {
        let s = &res.summary;
        eprintln!(
            "{}: {} nodes, {} cells ({} x {}), {:.2} s, {:.3e} pair evaluations",
            s.scenario, s.nodes, s.cells, s.cols, s.rows, s.elapsed_s, s.pair_evaluations as f64
        );
        if let (Some(f), Some(h)) = (s.sinr_ok_fraction, s.hotspots) {
            eprintln!(
                "SINR >= {} dB on {:.1} % of cells; {} interference hot spot(s)",
                s.sinr_threshold_db,
                f * 100.0,
                h
            );
        }
        eprintln!("wrote {} files to {}", res.files.len(), out.display());
    }
    Ok(ExitCode::SUCCESS)
}

/// The bundled demo: `sites/harbourlight/scenario.toml` under the current folder, or under
/// the source tree the binary was built from.
fn demo_scenario() -> anyhow::Result<PathBuf> {
    let rel = Path::new("sites/harbourlight/scenario.toml");
    for base in [PathBuf::from("."), PathBuf::from(env!("CARGO_MANIFEST_DIR"))] {
        let p = base.join(rel);
        if p.exists() {
            return Ok(p);
        }
    }
    Err(bad_flag("demo", format!("cannot find {}; run from the repository folder", rel.display())))
}
