//! The command-line front end: clap definitions (each flag once, with its help), one function
//! per subcommand that checks the flags, calls the library and prints.

use clap::{Parser, Subcommand};
use lobemap::config::field::{FieldOverrides, FieldSpec};
use lobemap::engine::LayerSet;
use lobemap::error::{Error, Problem};
use lobemap::model::scenario::Scenario;
use lobemap::run::aggregate::{AggregateOptions, AggregateResult, run_aggregate};
use lobemap::run::map::{MapOptions, run_map};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// Interference, SINR and coverage maps for directional wireless nodes.
#[derive(Parser)]
#[command(name = "lobemap", version, about, after_help = EXIT_CODES)]
pub struct Cli {
    #[command(subcommand)]
    cmd: Cmd,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(allow_hyphen_values = true, long, global = true)]
    threads: Option<usize>,
    /// No progress bar or chatter on stderr.
    #[arg(long, global = true)]
    quiet: bool,
}

/// The exit codes, shown under every `--help`.
const EXIT_CODES: &str = "Exit codes: 0 success; 1 internal fault; 2 bad input (every problem named, nothing written); 3 `links --strict` found a link that fails, lacks 60 % Fresnel clearance or misses the availability target; 130 interrupted (temporaries removed).";

#[derive(Subcommand)]
#[command(after_help = EXIT_CODES)]
enum Cmd {
    /// Compute the layers of a scenario and write GeoTIFFs, PNGs, hot spots and a summary.
    #[command(allow_negative_numbers = true)]
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
        /// Cross-check the coverage probability with this many seeded Monte Carlo trials.
        #[arg(allow_hyphen_values = true, long, value_name = "N")]
        monte_carlo: Option<usize>,
        /// Seed of the Monte Carlo.
        #[arg(allow_hyphen_values = true, long, default_value_t = 1)]
        seed: u64,
    },
    /// Check every planned link (node with a `peer`) and write the link table, the installer
    /// sheet and the HTML report.
    Links {
        /// Scenario file (TOML).
        scenario: PathBuf,
        /// Output folder (default: outputs/<scenario name>/).
        #[arg(long)]
        out: Option<PathBuf>,
        /// Exit with code 3 when any link misses its SINR threshold or coverage target, (over
        /// a [surface]) has less than 60 % of its first Fresnel zone clear, or (with [rain])
        /// falls below the availability target.
        #[arg(long)]
        strict: bool,
        /// Cross-check each link's coverage with this many seeded Monte Carlo trials.
        #[arg(allow_hyphen_values = true, long, value_name = "N")]
        monte_carlo: Option<usize>,
        /// Seed of the Monte Carlo (link k uses seed + k).
        #[arg(allow_hyphen_values = true, long, default_value_t = 1)]
        seed: u64,
        /// Leave the maps out of the report (faster on large grids).
        #[arg(long)]
        no_maps: bool,
        /// Print the rows as JSON instead of a table.
        #[arg(long)]
        json: bool,
        /// Refuse map grids whose layers need more memory than this (MiB).
        #[arg(allow_hyphen_values = true, long, default_value_t = 8192)]
        max_memory_mib: u64,
    },
    /// Print a shell completion script to stdout (install it where your shell looks).
    Completions {
        /// The shell.
        shell: clap_complete::Shell,
    },
    /// Print the manual page (roff) to stdout: `lobemap man > lobemap.1; man ./lobemap.1`.
    Man,
    /// Validate a scenario and its node file; list every problem.
    Check {
        /// Scenario file (TOML).
        scenario: PathBuf,
        /// Memory limit for a full map of this scenario (MiB).
        #[arg(allow_hyphen_values = true, long, default_value_t = 8192)]
        max_memory_mib: u64,
    },
    /// Characterise the aggregate interference of a random (Poisson) field of interferers at a
    /// reference receiver: cumulants, gamma fit, exact CDF, Monte Carlo, planning answers.
    #[command(allow_negative_numbers = true)]
    Aggregate(Box<AggArgs>),
    /// Draw one random layout from the scenario's [draw] table and write it as GeoJSON.
    Draw {
        /// Scenario file (TOML) with a [draw] table.
        scenario: PathBuf,
        /// Output GeoJSON file.
        #[arg(long)]
        out: PathBuf,
        /// Seed (default: the [draw] table's).
        #[arg(allow_hyphen_values = true, long)]
        seed: Option<u64>,
    },
    /// Search a channel and polarisation for every link and lone node (maximise the worst
    /// link margin, then fewer failing links, then less outage) and write the node file with
    /// the plan; nodes with `"locked": true` keep theirs.
    Assign {
        /// Scenario file (TOML) with a [channels] table.
        scenario: PathBuf,
        /// Output node file (GeoJSON); every command reads it.
        #[arg(long)]
        out: PathBuf,
        /// Seed of the local search (used beyond 2e6 plans).
        #[arg(allow_hyphen_values = true, long, default_value_t = 1)]
        seed: u64,
        /// Print JSON instead of the table.
        #[arg(long)]
        json: bool,
    },
    /// Join the tiles of `map --tile K/N` runs into the outputs of one map (a VRT per layer
    /// over the tiles, and every file `map` writes).
    Merge {
        /// Tile folders, or the --out folders of the tile runs (their tile-* folders are read).
        #[arg(required = true, value_name = "DIR")]
        dirs: Vec<PathBuf>,
        /// Output folder.
        #[arg(long)]
        out: PathBuf,
        /// Refuse grids whose assembled layers need more memory than this (MiB).
        #[arg(allow_hyphen_values = true, long, default_value_t = 8192)]
        max_memory_mib: u64,
    },
    /// Run the map on the bundled demo scenario.
    Demo {
        #[command(flatten)]
        map: MapArgs,
    },
}

#[derive(clap::Args)]
struct AggArgs {
    /// Take radio, propagation, antenna and receiver values from this scenario; flags override.
    #[arg(long)]
    scenario: Option<PathBuf>,
    /// Interferer density before thinning, per km².
    #[arg(long)]
    density_per_km2: Option<f64>,
    /// Independent retention probability (0, 1] [default: scenario [draw], else 1].
    #[arg(long)]
    keep: Option<f64>,
    /// Matérn II hard-core distance, m [default: scenario [draw], else 0 (none)].
    #[arg(long)]
    hard_core_m: Option<f64>,
    /// Outer radius of the interferer region, m.
    #[arg(long, default_value_t = 1000.0)]
    radius_m: f64,
    /// Guard radius: no interferer closer than this, m.
    #[arg(long, default_value_t = 10.0)]
    guard_m: f64,
    /// Interferer transmit power, dBm [default: scenario, else 20].
    #[arg(long)]
    power_dbm: Option<f64>,
    /// Interferer pattern: sector, parabolic or omni [default: the scenario's [antenna], else
    /// sector when --beamwidth-deg is below 360, omni otherwise].
    #[arg(long)]
    pattern: Option<String>,
    /// Interferer main-lobe width, degrees [default: scenario, else 360].
    #[arg(long)]
    beamwidth_deg: Option<f64>,
    /// Interferer main-lobe gain, dBi [default: scenario, else 0].
    #[arg(long)]
    gain_dbi: Option<f64>,
    /// Interferer side-lobe gain, dBi [default: scenario, else the main gain].
    #[arg(long)]
    sidelobe_dbi: Option<f64>,
    /// Receiver main-lobe width, degrees [default: scenario receiver, else 360 (omni)].
    #[arg(long)]
    rx_beamwidth_deg: Option<f64>,
    /// Receiver main-lobe gain, dBi [default: scenario receiver, else 0].
    #[arg(long)]
    rx_gain_dbi: Option<f64>,
    /// Receiver side-lobe gain, dBi [default: scenario receiver, else the main gain].
    #[arg(long)]
    rx_sidelobe_dbi: Option<f64>,
    /// Path-loss model: free-space, close-in, power-law [default: scenario, else close-in].
    #[arg(long)]
    model: Option<String>,
    /// Path-loss exponent [default: scenario, else 3].
    #[arg(long)]
    exponent: Option<f64>,
    /// Loss at 1 m for power-law, dB [default: scenario, else 40].
    #[arg(long)]
    loss_at_1m_db: Option<f64>,
    /// Carrier frequency, GHz [default: scenario, else 28].
    #[arg(long)]
    frequency_ghz: Option<f64>,
    /// Gaseous absorption, dB/km [default: scenario, else 0].
    #[arg(long)]
    absorption_db_per_km: Option<f64>,
    /// Minimum distance (clamp), m [default: scenario, else 1].
    #[arg(long)]
    min_distance_m: Option<f64>,
    /// Blockage by buildings: a link of length r is in line of sight with probability
    /// exp(-B r), B per m [default: derived from the scenario's footprints, if any, else no
    /// blockage].
    #[arg(long, value_name = "B")]
    los_beta_per_m: Option<f64>,
    /// Path-loss exponent of blocked links (close-in law) [default: 3.19].
    #[arg(long)]
    nlos_exponent: Option<f64>,
    /// No blockage, even with a scenario that has building footprints.
    #[arg(long)]
    no_blockage: bool,
    /// Fading of each interfering link: none, rayleigh, nakagami, rician [default: the
    /// scenario's interferer fading, else rayleigh].
    #[arg(long)]
    fading: Option<String>,
    /// Rician K-factor, dB.
    #[arg(long, default_value_t = 6.0, allow_hyphen_values = true)]
    k_db: f64,
    /// Nakagami m.
    #[arg(long, default_value_t = 2.0)]
    m: f64,
    /// Report P(I > x) at this level, dBm (repeatable).
    #[arg(long = "threshold-dbm", allow_hyphen_values = true)]
    thresholds_dbm: Vec<f64>,
    /// Monte Carlo realisations (0: none).
    #[arg(allow_hyphen_values = true, long, default_value_t = 0)]
    realizations: usize,
    /// Monte Carlo seed.
    #[arg(allow_hyphen_values = true, long, default_value_t = 1)]
    seed: u64,
    /// One curve set per value: KEY=V1,V2,... with KEY beamwidth_deg, sidelobe_dbi,
    /// density_per_km2 or k_db.
    #[arg(long, allow_hyphen_values = true)]
    sweep: Option<String>,
    /// Find the highest density with P(I > --budget-dbm) <= --outage.
    #[arg(long)]
    max_density: bool,
    /// Find the smallest guard radius with P(I > --budget-dbm) <= --outage.
    #[arg(long)]
    min_guard: bool,
    /// Interference budget for --max-density / --min-guard, dBm.
    #[arg(long, allow_hyphen_values = true)]
    budget_dbm: Option<f64>,
    /// Allowed outage probability for --max-density / --min-guard.
    #[arg(long, default_value_t = 0.01)]
    outage: f64,
    /// Print JSON instead of a table.
    #[arg(long)]
    json: bool,
    /// Write the CDF table (CSV), the plot (PNG, SVG) and the JSON report here.
    #[arg(long)]
    out: Option<PathBuf>,
}

#[derive(clap::Args)]
struct MapArgs {
    /// Output folder (default: outputs/<scenario name>/, or outputs/demo/ for the demo).
    #[arg(long)]
    out: Option<PathBuf>,
    /// Layers to compute and write, comma-separated: total, interference, sinr, server,
    /// coverage, visible (nodes in line of sight; needs a [surface], and is added to the
    /// default there), availability (in rain; needs [rain], and is added to the default there),
    /// channel (the best server's channel index; added to the default when nodes use more than
    /// one channel).
    #[arg(long, default_value = DEFAULT_LAYERS)]
    layers: String,
    /// Skip nodes farther than this from a grid row (m); the dropped power is bounded and
    /// reported as `neglected_db` in summary.json.
    #[arg(long)]
    cutoff_m: Option<f64>,
    /// Refuse grids whose layers need more memory than this (MiB).
    #[arg(allow_hyphen_values = true, long, default_value_t = 8192)]
    max_memory_mib: u64,
    /// With a [draw] table: average the layers over this many independent layouts.
    #[arg(allow_hyphen_values = true, long, default_value_t = 1)]
    realizations: usize,
    /// Compute tile K of N (blocks of grid rows, K from 0) into <out>/tile-K-of-N/, for
    /// `lobemap merge`; `array/N` takes K from $SLURM_ARRAY_TASK_ID or $JOB_COMPLETION_INDEX.
    #[arg(long, value_name = "K/N")]
    tile: Option<String>,
    /// Aggregate far nodes in clusters with at most this error on every layer (dB, 0.05 to
    /// 6; the worst cell's bound is `far_field_bound_db` in summary.json): for dense
    /// layouts. Layers total, interference, sinr, server (the default with this flag); omni
    /// receiver, one channel, no surface.
    #[arg(allow_hyphen_values = true, long, value_name = "TOL")]
    far_field_db: Option<f64>,
}

fn bad_flag(flag: &str, msg: String) -> anyhow::Error {
    Error::input(Problem::flag(flag, msg)).into()
}

impl AggArgs {
    fn overrides(&self) -> FieldOverrides {
        FieldOverrides {
            density_per_km2: self.density_per_km2,
            keep: self.keep,
            hard_core_m: self.hard_core_m,
            radius_m: self.radius_m,
            guard_m: self.guard_m,
            power_dbm: self.power_dbm,
            beamwidth_deg: self.beamwidth_deg,
            gain_dbi: self.gain_dbi,
            sidelobe_dbi: self.sidelobe_dbi,
            rx_beamwidth_deg: self.rx_beamwidth_deg,
            rx_gain_dbi: self.rx_gain_dbi,
            rx_sidelobe_dbi: self.rx_sidelobe_dbi,
            model: self.model.clone(),
            exponent: self.exponent,
            loss_at_1m_db: self.loss_at_1m_db,
            frequency_ghz: self.frequency_ghz,
            absorption_db_per_km: self.absorption_db_per_km,
            min_distance_m: self.min_distance_m,
            fading: self.fading.clone(),
            k_db: self.k_db,
            m: self.m,
            density_swept: self.sweep.as_deref().is_some_and(|s| s.starts_with("density_per_km2=")),
            pattern: self.pattern.clone(),
            los_beta_per_m: self.los_beta_per_m,
            nlos_exponent: self.nlos_exponent,
            no_blockage: self.no_blockage,
        }
    }

    fn options(&self) -> AggregateOptions {
        AggregateOptions {
            sweep: self.sweep.clone(),
            thresholds_dbm: self.thresholds_dbm.clone(),
            realizations: self.realizations,
            seed: self.seed,
            max_density: self.max_density,
            min_guard: self.min_guard,
            budget_dbm: self.budget_dbm,
            outage: self.outage,
            out: self.out.clone(),
            inputs: Vec::new(),
        }
    }
}

/// Runs a parsed command line; the error's type decides the exit code (see `main`).
pub fn run(cli: Cli) -> anyhow::Result<ExitCode> {
    lobemap::progress::show(!cli.quiet);
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
        Cmd::Merge { dirs, out, max_memory_mib } => {
            let res = lobemap::run::merge::run_merge(&lobemap::run::merge::MergeOptions {
                dirs,
                out: out.clone(),
                max_memory_mib,
            })?;
            if !cli.quiet {
                let s = &res.summary;
                eprintln!(
                    "{}: merged {} tiles, {} cells ({} x {}), {:.2} s of tile computation",
                    s.scenario, res.tiles, s.cells, s.cols, s.rows, s.elapsed_s
                );
                eprintln!("wrote {} files to {}", res.files.len(), out.display());
            }
            Ok(ExitCode::SUCCESS)
        }
        Cmd::Demo { map } => {
            if map.tile.is_some() {
                return Err(bad_flag("--tile", "tiles are for `lobemap map SCENARIO`; the demo runs whole".into()));
            }
            let path = lobemap::run::demo::scenario_path()?;
            let sc = Scenario::load(&path)?;
            let out = map.out.clone().unwrap_or_else(|| PathBuf::from("outputs/demo"));
            map_cmd(&sc, map, cli.quiet, Some("outputs/demo"))?;
            let spec = FieldSpec::resolve(Some(&sc), &lobemap::run::demo::field_overrides())?;
            let agg = lobemap::run::demo::aggregate_dir(&out);
            let res = run_aggregate(&spec, &lobemap::run::demo::aggregate_options(&agg))?;
            print_aggregate(&res, false, cli.quiet, &agg);
            links_cmd(&sc, Some(out), false, None, true, false, 8192, cli.quiet)
        }
        Cmd::Aggregate(a) => aggregate_cmd(*a, false),
        Cmd::Links { scenario, out, strict, monte_carlo, seed, no_maps, json, max_memory_mib } => {
            check_trials(monte_carlo)?;
            let sc = Scenario::load(&scenario)?;
            links_cmd(&sc, out, strict, monte_carlo.map(|n| (n, seed)), !no_maps, json, max_memory_mib, cli.quiet)
        }
        Cmd::Assign { scenario, out, seed, json } => {
            let sc = Scenario::load(&scenario)?;
            let res = lobemap::run::assign::run_assign(&sc, &out, seed)?;
            if json {
                println!("{}", serde_json::to_string_pretty(&res.plan)?);
            } else {
                print!("{}", lobemap::run::assign::table(&res.plan));
            }
            if !cli.quiet {
                eprintln!("wrote {}", out.display());
            }
            Ok(ExitCode::SUCCESS)
        }
        Cmd::Draw { scenario, out, seed } => {
            let sc = Scenario::load(&scenario)?;
            let t0 = std::time::Instant::now();
            let res = lobemap::run::draw::run_draw(&sc, &out, seed)?;
            if !cli.quiet {
                eprintln!(
                    "drew {} nodes ({} in the layout) in {:.2} s; wrote {}",
                    res.drawn,
                    res.nodes.len(),
                    t0.elapsed().as_secs_f64(),
                    out.display()
                );
            }
            Ok(ExitCode::SUCCESS)
        }
        Cmd::Completions { shell } => {
            let mut cmd = <Cli as clap::CommandFactory>::command();
            clap_complete::generate(shell, &mut cmd, "lobemap", &mut std::io::stdout());
            Ok(ExitCode::SUCCESS)
        }
        Cmd::Man => {
            let cmd = <Cli as clap::CommandFactory>::command();
            let mut out = Vec::new();
            clap_mangen::Man::new(cmd).render(&mut out)?;
            std::io::Write::write_all(&mut std::io::stdout(), &out)?;
            Ok(ExitCode::SUCCESS)
        }
        Cmd::Check { scenario, max_memory_mib } => match Scenario::load(&scenario) {
            Ok(sc) => {
                let layers = LayerSet::ALL.count()
                    + sc.surface().is_some() as usize
                    + sc.weather().rain.is_some() as usize
                    + sc.uses_channels() as usize;
                lobemap::run::map::check_memory(&sc, layers, max_memory_mib)?;
                for w in lobemap::jobs::spacing::isolated_nodes(&sc) {
                    eprintln!(
                        "warning: node `{}` is {:.1} km from its nearest neighbour while the median spacing is {:.0} m: check its coordinates (GeoJSON is [lon, lat])",
                        w.id,
                        w.nearest_m / 1000.0,
                        w.median_m
                    );
                }
                println!(
                    "{}: ok: {} nodes, grid {} x {} cells of {} m, noise {:.2} dBm, a full map needs about {:.0} MiB",
                    scenario.display(),
                    sc.nodes().len(),
                    sc.grid().cols(),
                    sc.grid().rows(),
                    sc.grid().cell_m(),
                    sc.noise_dbm(),
                    lobemap::run::map::estimate_bytes(&sc, layers) as f64 / 1048576.0
                );
                let w = sc.weather();
                println!("  {}", w.gas_words(sc.pathloss().absorption_db_per_km()));
                if let Some(r) = w.rain_words() {
                    println!("  {r}");
                }
                if w.gas == lobemap::model::weather::GasSource::None && sc.pathloss().frequency_ghz() >= 10.0 {
                    eprintln!(
                        "warning: no gaseous loss at {} GHz: add an [atmosphere] table (ITU-R P.676) or [propagation] absorption_db_per_km",
                        sc.pathloss().frequency_ghz()
                    );
                }
                Ok(ExitCode::SUCCESS)
            }
            Err(e) => Err(e.into()),
        },
        Cmd::Probe { scenario, at, json, monte_carlo, seed } => {
            let (lat, lon) = parse_lat_lon(&at)?;
            check_trials(monte_carlo)?;
            let sc = Scenario::load(&scenario)?;
            if sc.grid().cell_of(lon, lat).is_none() {
                let b = sc.grid().bbox();
                return Err(bad_flag(
                    "--at",
                    format!(
                        "point {lat}, {lon} (LAT,LON) lies outside the mapped area, latitude [{:.6}, {:.6}] and longitude [{:.6}, {:.6}]; probe a point inside it (were latitude and longitude swapped?)",
                        b.south, b.north, b.west, b.east
                    ),
                ));
            }
            let p = lobemap::jobs::probe::probe_with(&sc, lat, lon, monte_carlo.map(|n| (n, seed)));
            if json {
                println!("{}", serde_json::to_string_pretty(&p)?);
            } else {
                print!("{}", p.to_table());
            }
            Ok(ExitCode::SUCCESS)
        }
    }
}

fn check_trials(n: Option<usize>) -> anyhow::Result<()> {
    match n {
        Some(n) if n == 0 || n > 100_000_000 => {
            Err(bad_flag("--monte-carlo", format!("value {n} is outside the allowed range [1, 1e8]")))
        }
        _ => Ok(()),
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

/// The `--layers` default.
const DEFAULT_LAYERS: &str = "total,interference,sinr,server,coverage";

fn map_cmd(sc: &Scenario, a: MapArgs, quiet: bool, default_out: Option<&str>) -> anyhow::Result<ExitCode> {
    let mut layers = LayerSet::parse(&a.layers).map_err(|m| bad_flag("--layers", m))?;
    if layers.visible && sc.surface().is_none() {
        return Err(bad_flag(
            "--layers",
            "layer `visible` counts nodes in line of sight and needs a [surface] table in the scenario".into(),
        ));
    }
    if layers.availability && sc.weather().rain.is_none() {
        return Err(bad_flag(
            "--layers",
            "layer `availability` is the availability in rain and needs a [rain] table in the scenario".into(),
        ));
    }
    // Over a surface the default layers include the line-of-sight count, with [rain] the
    // availability.
    if a.layers == DEFAULT_LAYERS && a.far_field_db.is_some() {
        layers.coverage = false;
    } else if a.layers == DEFAULT_LAYERS {
        layers.visible = sc.surface().is_some();
        layers.availability = sc.weather().rain.is_some();
        layers.channel = sc.uses_channels();
    }
    if let Some(c) = a.cutoff_m
        && !(c.is_finite() && c > 0.0)
    {
        return Err(bad_flag("--cutoff-m", format!("value {c} is outside the allowed range (0, inf) m")));
    }
    let out = a
        .out
        .unwrap_or_else(|| PathBuf::from(default_out.map(String::from).unwrap_or(format!("outputs/{}", sc.name()))));
    if a.realizations == 0 || a.realizations > 10_000 {
        return Err(bad_flag(
            "--realizations",
            format!("value {} is outside the allowed range [1, 10000]", a.realizations),
        ));
    }
    if a.realizations > 1 && sc.draw().is_none() {
        return Err(bad_flag(
            "--realizations",
            "averaging needs random layouts: add a [draw] table to the scenario".into(),
        ));
    }
    let tile = a
        .tile
        .as_deref()
        .map(|t| lobemap::run::tiles::Tile::parse(t, |v| std::env::var(v).ok()))
        .transpose()
        .map_err(|m| bad_flag("--tile", m))?;
    let res = run_map(
        sc,
        &MapOptions {
            tile,
            far_field_db: a.far_field_db,
            out: out.clone(),
            layers,
            cutoff_m: a.cutoff_m,
            max_memory_mib: a.max_memory_mib,
            progress: !quiet,
            realizations: a.realizations,
        },
    )?;
    if let Some(neg) = res.summary.neglected_db {
        // The server stays exact under a cutoff; what it drops is interference only.
        let sinr_bound = 10.0 * (1.0 + 10f64.powf(neg / 10.0)).log10();
        if sinr_bound > 0.1 {
            eprintln!(
                "warning: --cutoff-m drops interference up to {neg:.2} dB relative to noise at the worst cell: SINR there may be up to {sinr_bound:.2} dB too high (the best server is exact)"
            );
        }
    }
    if !quiet {
        let s = &res.summary;
        eprintln!(
            "{}: {} nodes, {} cells ({} x {}), {:.2} s, {:.3e} pair evaluations",
            s.scenario, s.nodes, s.cells, s.cols, s.rows, s.elapsed_s, s.pair_evaluations as f64
        );
        if let (Some(tol), Some(b)) = (s.far_field_db, s.far_field_bound_db) {
            eprintln!("far field: worst cell's bound {b:.3} dB (tolerance {tol} dB)");
        }
        if let (Some(f), Some(h)) = (s.sinr_ok_fraction, s.hotspots) {
            eprintln!(
                "SINR >= {} dB on {:.1} % of cells; {} interference hot spot(s)",
                s.sinr_threshold_db,
                f * 100.0,
                h
            );
        }
        match tile {
            Some(t) => eprintln!("wrote tile {} of {} to {}", t.index, t.count, out.join(t.folder()).display()),
            None => eprintln!("wrote {} files to {} in {:.2} s", res.files.len(), out.display(), res.write_s),
        }
    }
    Ok(ExitCode::SUCCESS)
}

fn aggregate_cmd(a: AggArgs, quiet: bool) -> anyhow::Result<ExitCode> {
    let sc = match &a.scenario {
        Some(p) => Some(Scenario::load(p)?),
        None => None,
    };
    let spec = FieldSpec::resolve(sc.as_ref(), &a.overrides())?;
    let mut opts = a.options();
    if let Some(sc) = &sc {
        opts.inputs = sc.input_files().into_iter().map(Path::to_path_buf).collect();
    }
    let res = run_aggregate(&spec, &opts)?;
    print_aggregate(&res, a.json, quiet, a.out.as_deref().unwrap_or(Path::new("")));
    Ok(ExitCode::SUCCESS)
}

fn print_aggregate(res: &AggregateResult, json: bool, quiet: bool, out: &Path) {
    if json {
        println!("{}", serde_json::to_string_pretty(&res.json()).unwrap_or_default());
    } else if !quiet {
        println!("{}", lobemap::io::tables::inputs_line(&res.spec));
        if let Some(site) = res.spec.blockage.as_ref().and_then(|b| b.site.as_ref()) {
            println!(
                "site footprints: {} buildings, {:.1} per km², mean perimeter {:.1} m: beta {:.5} per m; line of sight measured / exp(-beta r):",
                site.buildings, site.density_per_km2, site.mean_perimeter_m, site.beta_per_m
            );
            for l in &site.los_by_distance {
                println!("  {:>5} m  {:.3} / {:.3}", l.distance_m, l.measured, l.model);
            }
        }
        for (l, r) in &res.reports {
            print!("{}", lobemap::io::tables::table(l, r));
        }
        for p in &res.plans {
            let f = |x: Option<f64>| x.map(|v| format!("{v:.4}")).unwrap_or("none in range".into());
            println!(
                "{} for P(I > {} dBm) <= {}: exact {}, gamma alone {}, difference {}",
                p.quantity,
                p.budget_dbm,
                p.outage,
                f(p.exact),
                f(p.gamma),
                f(p.difference)
            );
        }
    }
    if !quiet && !res.files.is_empty() {
        eprintln!("wrote {} files to {}", res.files.len(), out.display());
    }
}

#[allow(clippy::too_many_arguments)]
fn links_cmd(
    sc: &Scenario,
    out: Option<PathBuf>,
    strict: bool,
    monte_carlo: Option<(usize, u64)>,
    maps: bool,
    json: bool,
    max_memory_mib: u64,
    quiet: bool,
) -> anyhow::Result<ExitCode> {
    let out = out.unwrap_or_else(|| PathBuf::from(format!("outputs/{}", sc.name())));
    let res = lobemap::run::links::run_links(
        sc,
        &lobemap::run::links::LinksOptions { out: out.clone(), monte_carlo, maps, max_memory_mib },
    )?;
    if json {
        println!("{}", serde_json::to_string_pretty(&res.rows)?);
    } else if !quiet {
        print!("{}", lobemap::jobs::links::table(&res.rows, sc));
    }
    if !quiet {
        eprintln!("wrote {} files to {}", res.files.len(), out.display());
    }
    if strict && res.rows.iter().any(|r| !r.passes || !r.clearance_ok || r.meets_target == Some(false)) {
        return Ok(ExitCode::from(3));
    }
    Ok(ExitCode::SUCCESS)
}
