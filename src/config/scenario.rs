//! The scenario file (TOML): radio, propagation, antenna defaults, receiver, grid and
//! thresholds. Parsing (serde, unknown keys rejected) and validation are separate stages: the
//! raw tables are read first, then checked and turned into a [`Scenario`] whose values are all
//! in range. Every problem found is reported at once.

use crate::config::nodes::{Node, parse_nodes};
use crate::error::{Error, Problem, Problems};
use crate::geometry::frame::LocalFrame;
use crate::geometry::grid::{BBox, Grid};
use crate::model::antenna::Pattern;
use crate::model::pathloss::{Law, PathLoss};
use serde::Deserialize;
use std::fmt;
use std::path::{Path, PathBuf};

/// An allowed numeric interval, printed like `(0, 360] deg`.
#[derive(Debug, Clone, Copy)]
pub struct Range {
    lo: f64,
    hi: f64,
    lo_open: bool,
    unit: &'static str,
}

impl Range {
    /// A closed interval [lo, hi].
    pub const fn closed(lo: f64, hi: f64, unit: &'static str) -> Self {
        Range { lo, hi, lo_open: false, unit }
    }
    /// A left-open interval (lo, hi].
    pub const fn left_open(lo: f64, hi: f64, unit: &'static str) -> Self {
        Range { lo, hi, lo_open: true, unit }
    }
    /// Whether `v` is finite and inside.
    pub fn contains(&self, v: f64) -> bool {
        v.is_finite() && v <= self.hi && if self.lo_open { v > self.lo } else { v >= self.lo }
    }
    /// Beamwidth: (0, 360] deg.
    pub const BEAMWIDTH: Range = Range::left_open(0.0, 360.0, "deg");
    /// Antenna gain: [-30, 60] dBi.
    pub const GAIN: Range = Range::closed(-30.0, 60.0, "dBi");
    /// Side-lobe level or floor: [-60, 60] dBi (and not above the main gain).
    pub const SIDELOBE: Range = Range::closed(-60.0, 60.0, "dBi");
    /// Transmit power: [-50, 80] dBm.
    pub const POWER: Range = Range::closed(-50.0, 80.0, "dBm");
    /// Antenna height: [0, 500] m.
    pub const HEIGHT: Range = Range::closed(0.0, 500.0, "m");
    /// Activity factor: [0, 1].
    pub const ACTIVITY: Range = Range::closed(0.0, 1.0, "");
}

impl fmt::Display for Range {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let l = if self.lo_open { "(" } else { "[" };
        write!(f, "{l}{}, {}]", self.lo, self.hi)?;
        if !self.unit.is_empty() {
            write!(f, " {}", self.unit)?;
        }
        Ok(())
    }
}

/// `[antenna]`: defaults for every node; each key may be overridden per node.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AntennaDefaults {
    /// `sector`, `parabolic` or `omni`.
    pub pattern: Option<String>,
    /// Main-lobe width (sector) or half-power beamwidth (parabolic), degrees.
    pub beamwidth_deg: Option<f64>,
    /// Main-lobe gain, dBi.
    pub gain_dbi: Option<f64>,
    /// Gain outside the main lobe (sector) or pattern floor (parabolic), dBi.
    pub sidelobe_dbi: Option<f64>,
    /// Conducted transmit power, dBm.
    pub power_dbm: Option<f64>,
    /// Antenna height, m (default 5).
    pub height_m: Option<f64>,
    /// Fraction of time transmitting (default 1).
    pub activity: Option<f64>,
}

/// Default antenna height when neither the node nor `[antenna]` gives one, m.
pub const DEFAULT_HEIGHT_M: f64 = 5.0;

impl AntennaDefaults {
    /// Turns merged values into (pattern, power_dbm, height_m, activity), reporting missing
    /// or inconsistent keys through `bad(field, message)`.
    pub fn resolve(&self, bad: &mut dyn FnMut(&str, String)) -> Option<(Pattern, f64, f64, f64)> {
        let need = |v: Option<f64>, field: &str, bad: &mut dyn FnMut(&str, String)| {
            if v.is_none() {
                bad(field, "missing; set it in the scenario's [antenna] table or in the node's properties".into());
            }
            v
        };
        let pattern = match self.pattern.as_deref() {
            None => {
                bad("pattern", "missing; one of `sector`, `parabolic`, `omni` in [antenna] or the node".into());
                None
            }
            Some("omni") => need(self.gain_dbi, "gain_dbi", bad).map(|g| Pattern::Omni { gain_dbi: g }),
            Some(k @ ("sector" | "parabolic")) => {
                let bw = need(self.beamwidth_deg, "beamwidth_deg", bad);
                let g = need(self.gain_dbi, "gain_dbi", bad);
                let s = need(self.sidelobe_dbi, "sidelobe_dbi", bad);
                match (bw, g, s) {
                    (Some(bw), Some(g), Some(s)) => {
                        if s > g {
                            bad(
                                "sidelobe_dbi",
                                format!("value {s} is above the main-lobe gain {g} dBi; it must not exceed it"),
                            );
                            None
                        } else if k == "sector" {
                            Some(Pattern::Sector { beamwidth_deg: bw, gain_dbi: g, sidelobe_dbi: s })
                        } else {
                            Some(Pattern::Parabolic { beamwidth_deg: bw, gain_dbi: g, floor_dbi: s })
                        }
                    }
                    _ => None,
                }
            }
            Some(other) => {
                bad("pattern", format!("value `{other}` is not one of `sector`, `parabolic`, `omni`"));
                None
            }
        };
        let power = need(self.power_dbm, "power_dbm", bad);
        Some((pattern?, power?, self.height_m.unwrap_or(DEFAULT_HEIGHT_M), self.activity.unwrap_or(1.0)))
    }
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawScenario {
    name: String,
    nodes: String,
    radio: RawRadio,
    propagation: RawPropagation,
    #[serde(default)]
    antenna: AntennaDefaults,
    #[serde(default)]
    receiver: RawReceiver,
    grid: RawGrid,
    #[serde(default)]
    thresholds: RawThresholds,
    draw: Option<RawDraw>,
    #[serde(default)]
    fading: RawFading,
    #[serde(default)]
    links: RawLinks,
    #[serde(default)]
    install: RawInstall,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFading {
    model: Option<String>,
    m: Option<f64>,
    k_db: Option<f64>,
    interferer_model: Option<String>,
    interferer_m: Option<f64>,
    interferer_k_db: Option<f64>,
    shadowing_db: Option<f64>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLinks {
    capacity_gap_db: Option<f64>,
    max_spectral_efficiency: Option<f64>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawInstall {
    declination_date: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawDraw {
    density_per_km2: f64,
    areas: Option<String>,
    keep: Option<f64>,
    hard_core_m: Option<f64>,
    azimuth: Option<String>,
    toward: Option<[f64; 2]>,
    seed: Option<u64>,
    mode: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRadio {
    frequency_ghz: f64,
    bandwidth_mhz: f64,
    noise_figure_db: f64,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPropagation {
    model: String,
    exponent: Option<f64>,
    loss_at_1m_db: Option<f64>,
    absorption_db_per_km: Option<f64>,
    min_distance_m: Option<f64>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawReceiver {
    height_m: Option<f64>,
    antenna: Option<String>,
    gain_dbi: Option<f64>,
    beamwidth_deg: Option<f64>,
    sidelobe_dbi: Option<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawGrid {
    cell_m: f64,
    margin_m: Option<f64>,
    bbox: Option<[f64; 4]>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawThresholds {
    sinr_db: Option<f64>,
    hotspot_i_over_n_db: Option<f64>,
    coverage_target: Option<f64>,
}

/// `[radio]`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Radio {
    /// Carrier frequency, GHz.
    pub frequency_ghz: f64,
    /// Receiver noise bandwidth, MHz.
    pub bandwidth_mhz: f64,
    /// Receiver noise figure, dB.
    pub noise_figure_db: f64,
}

/// `[receiver]`: the antenna of a hypothetical receiver at each cell.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Receiver {
    /// Height above ground, m (default 1.5).
    pub height_m: f64,
    /// The receiving antenna. For `aimed`, a sector pattern pointed at the cell's best server.
    pub pattern: Pattern,
    /// Whether the pattern is aimed at the best server (otherwise omni).
    pub aimed: bool,
}

impl Receiver {
    /// Gain used for the `total` layer (what any new receiver would pick up): the omni gain,
    /// or 0 dBi when the receiver is aimed.
    pub fn omni_gain_dbi(&self) -> f64 {
        if self.aimed { 0.0 } else { self.pattern.max_gain_dbi() }
    }
}

/// `[thresholds]`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Thresholds {
    /// SINR a receiver needs, dB (default 5).
    pub sinr_db: f64,
    /// Interference-over-noise level that marks a hot spot, dB (default 0).
    pub hotspot_i_over_n_db: f64,
    /// Coverage probability a cell or link must reach (default 0.9).
    pub coverage_target: f64,
}

/// `[fading]`: small-scale fading of the wanted signal and of interferers, and log-normal
/// shadowing of every link.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FadingSpec {
    /// Fading of the wanted signal.
    pub signal: crate::model::fading::Fading,
    /// Fading of each interferer.
    pub interferer: crate::model::fading::Fading,
    /// Log-normal shadowing standard deviation, dB (0: none).
    pub shadowing_db: f64,
}

impl Default for FadingSpec {
    fn default() -> Self {
        FadingSpec {
            signal: crate::model::fading::Fading::None,
            interferer: crate::model::fading::Fading::None,
            shadowing_db: 0.0,
        }
    }
}

/// `[links]`: capacity estimate settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LinkSettings {
    /// Implementation gap Γ in C = B log2(1 + SINR/Γ), dB (default 3).
    pub capacity_gap_db: f64,
    /// Cap on the spectral efficiency, bit/s/Hz (default 8: 256-QAM at rate about 1).
    pub max_spectral_efficiency: f64,
}

/// `[install]`: installer-sheet settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct InstallSettings {
    /// Date at which magnetic declination is evaluated (year, ordinal day).
    pub declination_date: (i32, u16),
}

/// A validated scenario with its nodes loaded.
#[derive(Debug, Clone)]
pub struct Scenario {
    /// Scenario name (used for the default output folder).
    pub name: String,
    /// The scenario file.
    pub path: PathBuf,
    /// The node file.
    pub nodes_path: PathBuf,
    /// Nodes, in file order.
    pub nodes: Vec<Node>,
    /// Radio parameters.
    pub radio: Radio,
    /// Path-loss model.
    pub pathloss: PathLoss,
    /// Receiver model.
    pub receiver: Receiver,
    /// Map grid.
    pub grid: Grid,
    /// Local tangent plane at the grid centre.
    pub frame: LocalFrame,
    /// Decision thresholds.
    pub thresholds: Thresholds,
    /// Random layout drawn around (or instead of) the fixed nodes.
    pub draw: Option<crate::random::points::DrawSpec>,
    /// Fading and shadowing.
    pub fading: FadingSpec,
    /// Link-table settings.
    pub links: LinkSettings,
    /// Installer-sheet settings.
    pub install: InstallSettings,
}

fn toml_problem(file: &str, e: &toml::de::Error) -> Problem {
    let msg = e.message().to_string();
    let field = msg
        .split('`')
        .nth(1)
        .filter(|_| msg.contains("unknown field") || msg.contains("missing field"))
        .unwrap_or("(syntax)")
        .to_string();
    let loc = e.span().map(|s| format!(" (at byte {})", s.start)).unwrap_or_default();
    Problem::new(file, None, field, format!("{msg}{loc}"))
}

/// Parses `YYYY-MM-DD` into (year, day of the year), checking the calendar.
pub fn parse_date(s: &str) -> Option<(i32, u16)> {
    let p: Vec<&str> = s.trim().split('-').collect();
    if p.len() != 3 {
        return None;
    }
    let (y, m, d): (i32, u32, u32) = (p[0].parse().ok()?, p[1].parse().ok()?, p[2].parse().ok()?);
    let leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
    let days = [31, if leap { 29 } else { 28 }, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];
    if !(1..=12).contains(&m) || d == 0 || d > days[(m - 1) as usize] {
        return None;
    }
    let ordinal = days[..(m - 1) as usize].iter().sum::<u32>() + d;
    Some((y, ordinal as u16))
}

impl Scenario {
    /// Reads, parses and validates a scenario file and its node file.
    pub fn load(path: &Path) -> Result<Scenario, Error> {
        let text = std::fs::read_to_string(path).map_err(|e| Error::Read { path: path.to_path_buf(), source: e })?;
        Self::from_toml(&text, path)
    }

    /// Parses and validates scenario text; `path` locates the file (node paths are relative
    /// to its folder).
    pub fn from_toml(text: &str, path: &Path) -> Result<Scenario, Error> {
        let file = path.display().to_string();
        let raw: RawScenario = toml::from_str(text).map_err(|e| Error::input(toml_problem(&file, &e)))?;
        let mut probs = Problems::default();
        let mut bad = |table: &str, field: &str, v: f64, r: Range| {
            if !r.contains(v) {
                probs.push(Problem::new(
                    &file,
                    Some(format!("[{table}]")),
                    field,
                    format!("value {v} is outside the allowed range {r}"),
                ));
            }
        };
        let r = &raw.radio;
        bad("radio", "bandwidth_mhz", r.bandwidth_mhz, Range::left_open(0.0, 10_000.0, "MHz"));
        bad("radio", "noise_figure_db", r.noise_figure_db, Range::closed(0.0, 30.0, "dB"));
        let a = &raw.antenna;
        for (field, v, rg) in [
            ("beamwidth_deg", a.beamwidth_deg, Range::BEAMWIDTH),
            ("gain_dbi", a.gain_dbi, Range::GAIN),
            ("sidelobe_dbi", a.sidelobe_dbi, Range::SIDELOBE),
            ("power_dbm", a.power_dbm, Range::POWER),
            ("height_m", a.height_m, Range::HEIGHT),
            ("activity", a.activity, Range::ACTIVITY),
        ] {
            if let Some(v) = v {
                bad("antenna", field, v, rg);
            }
        }
        let rx = &raw.receiver;
        let rx_height = rx.height_m.unwrap_or(1.5);
        bad("receiver", "height_m", rx_height, Range::HEIGHT);
        let rx_gain = rx.gain_dbi.unwrap_or(0.0);
        bad("receiver", "gain_dbi", rx_gain, Range::GAIN);
        let thr = Thresholds {
            sinr_db: raw.thresholds.sinr_db.unwrap_or(5.0),
            hotspot_i_over_n_db: raw.thresholds.hotspot_i_over_n_db.unwrap_or(0.0),
            coverage_target: raw.thresholds.coverage_target.unwrap_or(0.9),
        };
        bad("thresholds", "coverage_target", thr.coverage_target, Range::left_open(0.0, 1.0, ""));
        let fz = &raw.fading;
        let shadowing_db = fz.shadowing_db.unwrap_or(0.0);
        bad("fading", "shadowing_db", shadowing_db, Range::closed(0.0, 20.0, "dB"));
        let capacity_gap_db = raw.links.capacity_gap_db.unwrap_or(3.0);
        bad("links", "capacity_gap_db", capacity_gap_db, Range::closed(0.0, 20.0, "dB"));
        let max_se = raw.links.max_spectral_efficiency.unwrap_or(8.0);
        bad("links", "max_spectral_efficiency", max_se, Range::left_open(0.0, 20.0, "bit/s/Hz"));
        bad("thresholds", "sinr_db", thr.sinr_db, Range::closed(-30.0, 60.0, "dB"));
        bad("thresholds", "hotspot_i_over_n_db", thr.hotspot_i_over_n_db, Range::closed(-40.0, 60.0, "dB"));
        bad("grid", "cell_m", raw.grid.cell_m, Range::closed(0.1, 10_000.0, "m"));
        if let Some(m) = raw.grid.margin_m {
            bad("grid", "margin_m", m, Range::closed(0.0, 100_000.0, "m"));
        }
        let (receiver_pattern, aimed) = match rx.antenna.as_deref().unwrap_or("omni") {
            "omni" => (Some(Pattern::Omni { gain_dbi: rx_gain }), false),
            "aimed" => {
                let bw = rx.beamwidth_deg.unwrap_or(f64::NAN);
                let sl = rx.sidelobe_dbi.unwrap_or(f64::NAN);
                bad("receiver", "beamwidth_deg", bw, Range::BEAMWIDTH);
                bad("receiver", "sidelobe_dbi", sl, Range::closed(-60.0, rx_gain, "dBi (not above gain_dbi)"));
                (Some(Pattern::Sector { beamwidth_deg: bw, gain_dbi: rx_gain, sidelobe_dbi: sl }), true)
            }
            other => {
                probs.push(Problem::new(
                    &file,
                    Some("[receiver]".into()),
                    "antenna",
                    format!("value `{other}` is not one of `omni`, `aimed`"),
                ));
                (None, false)
            }
        };
        if raw.name.trim().is_empty() || !raw.name.chars().all(|c| c.is_ascii_alphanumeric() || "-_. ".contains(c)) {
            probs.push(Problem::new(
                &file,
                None,
                "name",
                format!("value `{}` must be non-empty and use only letters, digits, space, '-', '_' or '.'", raw.name),
            ));
        }
        let mut fading_law = |field: &str, model: Option<&str>, m: Option<f64>, k: Option<f64>| {
            use crate::model::fading::Fading;
            let r = match model.unwrap_or("none") {
                "none" => Ok(Fading::None),
                "rayleigh" => Ok(Fading::Rayleigh),
                "nakagami" => Fading::nakagami(m.unwrap_or(f64::NAN)).map_err(|e| (field.replace("model", "m"), e)),
                "rician" => Fading::rician_db(k.unwrap_or(f64::NAN)).map_err(|e| (field.replace("model", "k_db"), e)),
                other => Err((
                    field.to_string(),
                    format!("value `{other}` is not one of `none`, `rayleigh`, `nakagami`, `rician`"),
                )),
            };
            r.map_err(|(f, e)| probs.push(Problem::new(&file, Some("[fading]".into()), f, e))).ok()
        };
        let sig = fading_law("model", fz.model.as_deref(), fz.m, fz.k_db);
        let intf = match fz.interferer_model.as_deref() {
            None => sig,
            Some(m) => {
                fading_law("interferer_model", Some(m), fz.interferer_m.or(fz.m), fz.interferer_k_db.or(fz.k_db))
            }
        };
        let declination_date = match raw.install.declination_date.as_deref() {
            None => Some((2026, 1)),
            Some(d) => match parse_date(d) {
                Some(ymd) if (2020..=2029).contains(&ymd.0) => Some(ymd),
                _ => {
                    probs.push(Problem::new(&file, Some("[install]".into()), "declination_date", format!("value `{d}` is not a date YYYY-MM-DD within the World Magnetic Model's validity, 2020-01-01 to 2029-12-31")));
                    None
                }
            },
        };
        let p = &raw.propagation;
        let law = match p.model.as_str() {
            "free-space" => Some(Law::FreeSpace),
            "close-in" => Some(Law::CloseIn { exponent: p.exponent.unwrap_or(f64::NAN) }),
            "power-law" => Some(Law::PowerLaw {
                exponent: p.exponent.unwrap_or(f64::NAN),
                loss_at_1m_db: p.loss_at_1m_db.unwrap_or(f64::NAN),
            }),
            other => {
                probs.push(Problem::new(
                    &file,
                    Some("[propagation]".into()),
                    "model",
                    format!("value `{other}` is not one of `free-space`, `close-in`, `power-law`"),
                ));
                None
            }
        };
        if p.model == "free-space" && p.exponent.is_some_and(|n| n != 2.0) {
            probs.push(Problem::new(
                &file,
                Some("[propagation]".into()),
                "exponent",
                "free-space has exponent 2; use `close-in` for another exponent",
            ));
        }
        if p.model != "power-law" && p.loss_at_1m_db.is_some() {
            probs.push(Problem::new(
                &file,
                Some("[propagation]".into()),
                "loss_at_1m_db",
                "only used by `power-law`; the other models derive it from the frequency",
            ));
        }
        let pathloss = law.and_then(|law| {
            PathLoss::new(
                law,
                r.frequency_ghz,
                p.absorption_db_per_km.unwrap_or(0.0),
                p.min_distance_m.unwrap_or(1.0),
                &file,
            )
            .map_err(|e| probs.0.extend(e))
            .ok()
        });

        let dir = path.parent().unwrap_or(Path::new("."));
        let nodes_path = dir.join(&raw.nodes);
        let nodes = match std::fs::read_to_string(&nodes_path) {
            Ok(t) => {
                parse_nodes(&t, &nodes_path.display().to_string(), &raw.antenna).map_err(|e| probs.0.extend(e)).ok()
            }
            Err(e) => {
                probs.push(Problem::new(
                    &file,
                    None,
                    "nodes",
                    format!("cannot read node file {}: {e}", nodes_path.display()),
                ));
                None
            }
        };
        let bbox = match (raw.grid.bbox, raw.grid.margin_m, &nodes) {
            (Some(_), Some(_), _) => {
                probs.push(Problem::new(
                    &file,
                    Some("[grid]".into()),
                    "bbox",
                    "give either bbox or margin_m, not both",
                ));
                None
            }
            (Some([w, s, e, n]), None, _) => {
                let b = BBox { west: w, south: s, east: e, north: n };
                match b.validate() {
                    Ok(()) => Some(b),
                    Err(m) => {
                        probs.push(Problem::new(&file, Some("[grid]".into()), "bbox", m));
                        None
                    }
                }
            }
            (None, margin, Some(nodes)) => {
                Some(BBox::around(nodes.iter().map(|n| (n.lon, n.lat)), margin.unwrap_or(100.0)))
            }
            (None, _, None) => None,
        };
        let draw = raw.draw.as_ref().and_then(|d| {
            crate::random::points::DrawSpec::parse(
                d.density_per_km2,
                d.areas.as_deref(),
                d.keep,
                d.hard_core_m,
                d.azimuth.as_deref(),
                d.toward,
                d.seed,
                d.mode.as_deref(),
                &raw.antenna,
                dir,
                &file,
            )
            .map_err(|e| probs.0.extend(e))
            .ok()
        });
        probs.into_result()?;
        let (pathloss, nodes, bbox, receiver_pattern) = match (pathloss, nodes, bbox, receiver_pattern) {
            (Some(a), Some(b), Some(c), Some(d)) => (a, b, c, d),
            _ => unreachable!("every None above recorded a problem"),
        };
        let grid = Grid::new(bbox, raw.grid.cell_m)
            .map_err(|m| Error::input(Problem::new(&file, Some("[grid]".into()), "cell_m", m)))?;
        let (clon, clat) = grid.bbox().centre();
        Ok(Scenario {
            name: raw.name,
            path: path.to_path_buf(),
            nodes_path,
            nodes,
            radio: Radio {
                frequency_ghz: r.frequency_ghz,
                bandwidth_mhz: r.bandwidth_mhz,
                noise_figure_db: r.noise_figure_db,
            },
            pathloss,
            receiver: Receiver { height_m: rx_height, pattern: receiver_pattern, aimed },
            grid,
            frame: LocalFrame::new(clat, clon),
            thresholds: thr,
            draw,
            fading: FadingSpec {
                signal: sig.unwrap_or(crate::model::fading::Fading::None),
                interferer: intf.unwrap_or(crate::model::fading::Fading::None),
                shadowing_db,
            },
            links: LinkSettings { capacity_gap_db, max_spectral_efficiency: max_se },
            install: InstallSettings { declination_date: declination_date.unwrap_or((2026, 1)) },
        })
    }

    /// A scenario built in code (tests, benchmarks, library users): the frame is placed at the
    /// grid centre; no `[draw]`, no fading, default link and installer settings.
    pub fn from_parts(
        nodes: Vec<Node>,
        radio: Radio,
        pathloss: PathLoss,
        receiver: Receiver,
        grid: Grid,
        thresholds: Thresholds,
    ) -> Scenario {
        let (lon, lat) = grid.bbox().centre();
        Scenario {
            name: "in-code".into(),
            path: PathBuf::from("(in code)"),
            nodes_path: PathBuf::from("(in code)"),
            nodes,
            radio,
            pathloss,
            receiver,
            grid,
            frame: LocalFrame::new(lat, lon),
            thresholds,
            draw: None,
            fading: FadingSpec::default(),
            links: LinkSettings { capacity_gap_db: 3.0, max_spectral_efficiency: 8.0 },
            install: InstallSettings { declination_date: (2026, 1) },
        }
    }

    /// Receiver noise power, dBm.
    pub fn noise_dbm(&self) -> f64 {
        crate::model::noise::noise_dbm(self.radio.bandwidth_mhz, self.radio.noise_figure_db)
    }
}
