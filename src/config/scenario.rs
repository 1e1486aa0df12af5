//! The scenario file (TOML): radio, propagation, antenna defaults, receiver, grid and
//! thresholds. Parsing (serde, unknown keys rejected) and validation are separate stages: the
//! raw tables are read first, then checked and turned into a [`Scenario`] whose values are all
//! in range. Every problem found is reported at once.

use crate::config::nodes::parse_nodes;
use crate::config::range::Range;
use crate::config::raw::RawScenario;
use crate::error::{Error, Problem, Problems};
use crate::geometry::frame::LocalFrame;
use crate::geometry::grid::{BBox, Grid};
use crate::model::antenna::Sector;
use crate::model::channel::{Channel, RADIO_CHANNEL, Rejection, Spectrum};
use crate::model::fading::FadingSpec;
use crate::model::pathloss::{LawParams, PathLoss};
use crate::model::scenario::{
    ColourScale, InstallSettings, LinkSettings, Radio, Receiver, ReceiverAntenna, Scenario, Thresholds,
};
use crate::model::weather::gas::Atmosphere;
use crate::model::weather::rain::{Rain, Scaling};
use crate::model::weather::{DEFAULT_TARGET_PCT, GasSource, InterfererFade, Weather};
use std::path::Path;

/// Most nodes a `[draw]` table may draw on average (each costs about 200 bytes, and a map costs
/// time in proportion to nodes × cells).
pub const MAX_DRAWN_NODES: f64 = 2e6;

/// How far from the layout's centre lobemap computes, km: the tangent plane's distances
/// stay within 31 ppm of Karney geodesics out to 50 km (1 − cos(d/R)) and its bearings,
/// corrected by the meridian convergence, within 0.01° (tested in `geometry::frame`).
pub const MAX_EXTENT_KM: f64 = 50.0;

/// Nodes farther than [`MAX_EXTENT_KM`] from the layout's median position are refused,
/// naming the node and, when swapping its numbers would bring it in, saying so.
fn check_extent(nodes: &[crate::model::node::Node], file: &str, probs: &mut Problems) {
    let median = |mut v: Vec<f64>| {
        v.sort_by(f64::total_cmp);
        v[v.len() / 2]
    };
    let lon0 = median(nodes.iter().map(|n| n.lon).collect());
    let lat0 = median(nodes.iter().map(|n| n.lat).collect());
    let frame = LocalFrame::new(lat0, lon0);
    // The plane's distance is only a guide this far out; past a quarter turn use the sphere.
    let km = |lon: f64, lat: f64| {
        let (e, n) = frame.to_local(lon, lat);
        let (dlat, dlon) = ((lat - lat0).to_radians(), (lon - lon0).to_radians());
        let a =
            (dlat / 2.0).sin().powi(2) + lat.to_radians().cos() * lat0.to_radians().cos() * (dlon / 2.0).sin().powi(2);
        let sphere = 2.0 * 6371.0 * a.sqrt().asin();
        if sphere > 1000.0 { sphere } else { e.hypot(n) / 1000.0 }
    };
    for (i, n) in nodes.iter().enumerate() {
        let d = km(n.lon, n.lat);
        if d > MAX_EXTENT_KM {
            let swapped = (-85.0..=85.0).contains(&n.lon) && km(n.lat, n.lon) <= MAX_EXTENT_KM;
            probs.push(Problem::new(
                file,
                Some(format!("feature {i} (id {})", n.id)),
                "geometry",
                format!(
                    "[{}, {}] lies {d:.1} km from the layout's median position [{lon0}, {lat0}]; lobemap computes within {MAX_EXTENT_KM} km of it{}",
                    n.lon,
                    n.lat,
                    if swapped { " (with longitude and latitude swapped it would lie inside: GeoJSON is [lon, lat])" } else { "" }
                ),
            ));
        }
    }
}

/// A TOML error as a problem at `file:line:column`, naming the key when the message or the
/// text at the error's place gives it.
fn toml_problem(file: &str, text: &str, e: &toml::de::Error) -> Problem {
    let msg = e.message().trim().to_string();
    let (place, key_at) = match e.span() {
        Some(s) => {
            let (line, col) = crate::config::keys::line_col(text, s.start);
            // The key of the line the error is on (`key = value`), if it is one.
            let line_text = text.lines().nth(line - 1).unwrap_or("");
            let key = line_text.split_once('=').map(|(k, _)| k.trim().trim_matches('"').to_string());
            (format!("{file}:{line}:{col}"), key.filter(|k| !k.is_empty() && !k.starts_with('[')))
        }
        None => (file.to_string(), None),
    };
    let field = msg
        .split('`')
        .nth(1)
        .filter(|_| msg.contains("missing field"))
        .map(str::to_string)
        .or(key_at)
        .unwrap_or_else(|| "(syntax)".into());
    Problem::new(place, None, field, msg)
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

/// Frequencies the weather models cover as lobemap implements them, GHz: ITU-R P.676-12
/// Annex 1 and P.838-3 hold from 1 GHz (to 1000 GHz; lobemap's carriers stop at 300).
const WEATHER_MIN_GHZ: f64 = 1.0;

/// `[atmosphere]`, `[rain]` and the availability target, every problem recorded.
fn weather(raw: &RawScenario, file: &str, probs: &mut Problems) -> Weather {
    let mut w = Weather::default();
    let f = raw.radio.frequency_ghz;
    let low_f = |table: &str, probs: &mut Problems| {
        if f.is_finite() && f < WEATHER_MIN_GHZ {
            probs.push(Problem::new(
                file,
                Some("[radio]".into()),
                "frequency_ghz",
                format!(
                    "value {f} is below {WEATHER_MIN_GHZ} GHz, where the [{table}] model (ITU-R P.676-12 / P.838-3) does not hold; remove [{table}] or raise the carrier"
                ),
            ));
        }
    };
    let user_gas = raw.propagation.absorption_db_per_km.is_some();
    if let Some(a) = &raw.atmosphere {
        low_f("atmosphere", probs);
        let d = Atmosphere::default();
        match Atmosphere::new(
            a.pressure_hpa.unwrap_or(d.pressure_hpa),
            a.temperature_c.unwrap_or(d.temperature_c),
            a.water_vapour_g_m3.unwrap_or(d.water_vapour_g_m3),
        ) {
            Ok(a) => w.gas = if user_gas { GasSource::User } else { GasSource::P676(a) },
            Err(errs) => {
                for e in errs {
                    probs.push(Problem::new(file, Some("[atmosphere]".into()), e.key, e.message));
                }
            }
        }
    } else if user_gas {
        w.gas = GasSource::User;
    }
    if let Some(r) = &raw.rain {
        low_f("rain", probs);
        let scaling = match r.scaling.as_deref().unwrap_or("frequency") {
            "frequency" => Some(Scaling::Frequency),
            "latitude" => Some(Scaling::Latitude),
            other => {
                probs.push(Problem::new(
                    file,
                    Some("[rain]".into()),
                    "scaling",
                    format!(
                        "value `{other}` is not `frequency` (ITU-R P.530-17, the default) or `latitude` (the rule of editions up to P.530-16)"
                    ),
                ));
                None
            }
        };
        match Rain::new(r.rate_mm_h, scaling.unwrap_or(Scaling::Frequency)) {
            Ok(rain) if scaling.is_some() => w.rain = Some(rain),
            Ok(_) => {}
            Err(e) => probs.push(Problem::new(file, Some("[rain]".into()), e.key, e.message)),
        }
        if r.interferers_fade == Some(true) {
            w.interferers = InterfererFade::Together;
        }
    }
    let target = raw.links.availability_target_pct.unwrap_or(DEFAULT_TARGET_PCT);
    let range = Range::closed(
        100.0 - crate::model::weather::rain::P_MAX,
        100.0 - crate::model::weather::rain::P_MIN,
        "% (the range ITU-R P.530 covers: 0.001 % to 1 % of the time)",
    );
    if !range.contains(target) {
        probs.push(Problem::new(
            file,
            Some("[links]".into()),
            "availability_target_pct",
            format!("value {target} is outside the allowed range {range}"),
        ));
    } else {
        w.target_pct = target;
    }
    w
}

/// `[colour_scale]` over the defaults: each given pair finite, low below high, within
/// [−300, 300].
fn colour_scale(raw: &crate::config::raw::RawColourScale, file: &str, probs: &mut Problems) -> ColourScale {
    let mut c = ColourScale::DEFAULT;
    for (key, given, slot) in [
        ("total", raw.total, &mut c.total),
        ("interference", raw.interference, &mut c.interference),
        ("sinr", raw.sinr, &mut c.sinr),
        ("visible", raw.visible, &mut c.visible),
    ] {
        let Some([lo, hi]) = given else { continue };
        if !(lo.is_finite() && hi.is_finite() && lo < hi && lo >= -300.0 && hi <= 300.0) {
            probs.push(Problem::new(
                file,
                Some("[colour_scale]".into()),
                key,
                format!("value [{lo}, {hi}] must be [low, high] with low < high, both within [-300, 300]"),
            ));
        } else {
            *slot = (lo as f32, hi as f32);
        }
    }
    c
}

/// `[channels]` (after the `[radio]` carrier, named `radio`) and `[spectrum]`, every problem
/// recorded.
fn spectrum(raw: &RawScenario, file: &str, probs: &mut Problems) -> Spectrum {
    let mut sp = Spectrum::single(raw.radio.frequency_ghz, raw.radio.bandwidth_mhz);
    for (name, c) in raw.channels.iter().flatten() {
        let place = Some(format!("[channels] {name}"));
        let mut ok = true;
        if name == RADIO_CHANNEL {
            probs.push(Problem::new(
                file,
                place.clone(),
                "(name)",
                format!("`{RADIO_CHANNEL}` names the [radio] carrier; give this channel another name"),
            ));
            ok = false;
        }
        if !name.chars().all(|ch| ch.is_ascii_alphanumeric() || "-_.".contains(ch)) {
            probs.push(Problem::new(
                file,
                place.clone(),
                "(name)",
                format!("`{name}` must use only letters, digits, '-', '_' or '.'"),
            ));
            ok = false;
        }
        for (key, v, r) in [
            ("centre_ghz", c.centre_ghz, Range::closed(0.1, 300.0, "GHz")),
            ("bandwidth_mhz", c.bandwidth_mhz, Range::left_open(0.0, 10_000.0, "MHz")),
        ] {
            if !r.contains(v) {
                probs.push(Problem::new(
                    file,
                    place.clone(),
                    key,
                    format!("value {v} is outside the allowed range {r}"),
                ));
                ok = false;
            }
        }
        // Duplicates among the table's channels (one may coincide with the [radio] carrier).
        if let Some(dup) =
            sp.channels.iter().skip(1).find(|o| o.centre_ghz == c.centre_ghz && o.bandwidth_mhz == c.bandwidth_mhz)
        {
            probs.push(Problem::new(
                file,
                place.clone(),
                "centre_ghz",
                format!(
                    "channel `{name}` ({} GHz, {} MHz) duplicates `{}`; give each channel once",
                    c.centre_ghz, c.bandwidth_mhz, dup.name
                ),
            ));
            ok = false;
        }
        if ok {
            sp.channels.push(Channel { name: name.clone(), centre_ghz: c.centre_ghz, bandwidth_mhz: c.bandwidth_mhz });
        }
    }
    if let Some(s) = &raw.spectrum {
        let d = Rejection::default();
        match Rejection::new(
            s.xpd_db.unwrap_or(d.xpd_db),
            s.aclr_db.unwrap_or(d.aclr_db),
            s.acs_db.unwrap_or(d.acs_db),
            s.aclr2_db,
            s.acs2_db,
        ) {
            Ok(r) => sp.rejection = r,
            Err(errs) => {
                for e in errs {
                    probs.push(Problem::new(file, Some("[spectrum]".into()), e.key, e.message));
                }
            }
        }
    }
    sp
}

impl Scenario {
    /// Reads, parses and validates a scenario file and its node file.
    pub fn load(path: &Path) -> Result<Scenario, Error> {
        let text = crate::config::read_input(path).map_err(|e| Error::Read { path: path.to_path_buf(), source: e })?;
        Self::from_toml(&text, path)
    }

    /// Parses and validates scenario text; `path` locates the file (node paths are relative
    /// to its folder).
    pub fn from_toml(text: &str, path: &Path) -> Result<Scenario, Error> {
        let file = path.display().to_string();
        // Syntax first, then every unknown key at once, then the typed tables.
        let doc: toml::Table = text.parse().map_err(|e| Error::input(toml_problem(&file, text, &e)))?;
        let unknown = crate::config::keys::unknown_keys(&doc, text, &file);
        if !unknown.is_empty() {
            return Err(Error::Input(unknown));
        }
        let raw: RawScenario = toml::from_str(text).map_err(|e| Error::input(toml_problem(&file, text, &e)))?;
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
        let receiver_antenna = match rx.antenna.as_deref().unwrap_or("omni") {
            "omni" => Some(ReceiverAntenna::Omni { gain_dbi: rx_gain }),
            "aimed" => {
                let bw = rx.beamwidth_deg.unwrap_or(f64::NAN);
                let sl = rx.sidelobe_dbi.unwrap_or(f64::NAN);
                bad("receiver", "beamwidth_deg", bw, Range::BEAMWIDTH);
                bad("receiver", "sidelobe_dbi", sl, Range::closed(-60.0, rx_gain, "dBi (not above gain_dbi)"));
                // Out-of-range values were reported just above.
                Sector::new(bw, rx_gain, sl).ok().map(ReceiverAntenna::Aimed)
            }
            other => {
                probs.push(Problem::new(
                    &file,
                    Some("[receiver]".into()),
                    "antenna",
                    format!("value `{other}` is not one of `omni`, `aimed`"),
                ));
                None
            }
        };
        if raw.name.trim().is_empty()
            || raw.name.starts_with('.')
            || !raw.name.chars().all(|c| c.is_ascii_alphanumeric() || "-_. ".contains(c))
        {
            probs.push(Problem::new(
                &file,
                None,
                "name",
                format!("value `{}` must be non-empty, not start with '.', and use only letters, digits, space, '-', '_' or '.'", raw.name),
            ));
        }
        // `prefix` is "" for the signal's keys and "interferer_" for the interferers'.
        let mut fading_law = |prefix: &str, model: Option<&str>, m: Option<f64>, k: Option<f64>| {
            crate::model::fading::Fading::from_name(model.unwrap_or("none"), m, k)
                .map_err(|e| {
                    probs.push(Problem::new(&file, Some("[fading]".into()), format!("{prefix}{}", e.key), e.message))
                })
                .ok()
        };
        let sig = fading_law("", fz.model.as_deref(), fz.m, fz.k_db);
        let intf = match fz.interferer_model.as_deref() {
            None => sig,
            Some(m) => fading_law("interferer_", Some(m), fz.interferer_m.or(fz.m), fz.interferer_k_db.or(fz.k_db)),
        };
        if let Some(signal) = sig {
            let spec = FadingSpec { signal, interferer: intf.unwrap_or(signal), shadowing_db };
            if shadowing_db.is_finite()
                && (0.0..=20.0).contains(&shadowing_db)
                && let Err(e) = crate::model::coverage::CoverageModel::check(&spec)
            {
                probs.push(Problem::new(&file, Some("[fading]".into()), e.key, e.message));
            }
        }
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
        if let Some(pol) = raw.antenna.polarisation.as_deref()
            && crate::model::node::Polarisation::parse(pol).is_none()
        {
            probs.push(Problem::new(
                &file,
                Some("[antenna]".into()),
                "polarisation",
                format!("value `{pol}` is not {}", crate::model::node::Polarisation::NAMES),
            ));
        }
        let weather = weather(&raw, &file, &mut probs);
        let spectrum = spectrum(&raw, &file, &mut probs);
        let colour_scale = colour_scale(&raw.colour_scale, &file, &mut probs);
        let context = crate::config::context::read(
            path.parent().unwrap_or(std::path::Path::new(".")),
            &raw.context.layers,
            &mut probs,
        );
        let channel_names: Vec<String> = spectrum.channels.iter().map(|c| c.name.clone()).collect();
        let p = &raw.propagation;
        let params = LawParams { exponent: p.exponent, loss_at_1m_db: p.loss_at_1m_db };
        // The gaseous loss: the user's dB/km overrides P.676 at the carrier.
        let absorption = match (p.absorption_db_per_km, weather.gas) {
            (Some(v), _) => v,
            (None, GasSource::P676(a)) if r.frequency_ghz >= 1.0 => a.gamma_db_per_km(r.frequency_ghz),
            _ => 0.0,
        };
        let pathloss =
            PathLoss::from_name(&p.model, &params, r.frequency_ghz, absorption, p.min_distance_m.unwrap_or(1.0))
                .map_err(|e| {
                    for q in e {
                        let table = if q.key == "frequency_ghz" { "[radio]" } else { "[propagation]" };
                        probs.push(Problem::new(&file, Some(table.into()), q.key, q.message));
                    }
                })
                .ok();

        let dir = path.parent().unwrap_or(Path::new("."));
        let nodes_path = dir.join(&raw.nodes);
        let nodes = match crate::config::read_input(&nodes_path) {
            Ok(t) => parse_nodes(&t, &nodes_path.display().to_string(), &raw.antenna, &channel_names)
                .map_err(|e| probs.0.extend(e))
                .ok(),
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
        if let Some(nodes) = &nodes {
            check_extent(nodes, &nodes_path.display().to_string(), &mut probs);
        }
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
            crate::model::draw::DrawSpec::parse(
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
        // Each channel's path loss: its carrier, and the gaseous loss there (the user's value, or
        // P.676 at that carrier).
        let channel_pathloss: Vec<PathLoss> = match &pathloss {
            None => Vec::new(),
            Some(pl) => spectrum
                .channels
                .iter()
                .enumerate()
                .filter_map(|(k, c)| {
                    if k == 0 {
                        return Some(pl.clone());
                    }
                    let gas = match (raw.propagation.absorption_db_per_km, weather.gas) {
                        (Some(v), _) => v,
                        (None, GasSource::P676(a)) => a.gamma_db_per_km(c.centre_ghz),
                        _ => 0.0,
                    };
                    pl.at_frequency(c.centre_ghz, gas)
                        .map_err(|e| {
                            for q in e {
                                probs.push(Problem::new(
                                    &file,
                                    Some(format!("[channels] {}", c.name)),
                                    q.key,
                                    q.message,
                                ));
                            }
                        })
                        .ok()
                })
                .collect(),
        };
        probs.into_result()?;
        let (pathloss, nodes, bbox, receiver_antenna) = match (pathloss, nodes, bbox, receiver_antenna) {
            (Some(a), Some(b), Some(c), Some(d)) => (a, b, c, d),
            _ => unreachable!("every None above recorded a problem"),
        };
        let grid = Grid::new(bbox, raw.grid.cell_m)
            .map_err(|m| Error::input(Problem::new(&file, Some("[grid]".into()), "cell_m", m)))?;
        let (clon, clat) = grid.bbox().centre();
        if let Some(d) = &draw {
            // Drawn nodes grow with density × area: refuse what would not fit in memory.
            let area_km2 = grid.cells() as f64 * grid.cell_m() * grid.cell_m() / 1e6;
            let expected = d.density_per_km2 * d.keep * area_km2;
            if expected > MAX_DRAWN_NODES {
                return Err(Error::input(Problem::new(
                    &file,
                    Some("[draw]".into()),
                    "density_per_km2",
                    format!(
                        "value {} on the grid's {area_km2:.2} km² would draw about {expected:.0} nodes; at most {MAX_DRAWN_NODES:.0} are drawn: lower the density or the area",
                        d.density_per_km2
                    ),
                )));
            }
        }
        let (corner_e, corner_n) = LocalFrame::new(clat, clon).to_local(grid.bbox().east, grid.bbox().north);
        let half_diagonal_km = corner_e.hypot(corner_n) / 1000.0;
        if half_diagonal_km > MAX_EXTENT_KM {
            let field = if raw.grid.bbox.is_some() { "bbox" } else { "margin_m" };
            return Err(Error::input(Problem::new(
                &file,
                Some("[grid]".into()),
                field,
                format!(
                    "the grid reaches {half_diagonal_km:.1} km from its centre; the local plane lobemap computes in holds to {MAX_EXTENT_KM} km: map a smaller area"
                ),
            )));
        }
        let frame = LocalFrame::new(clat, clon);
        let surface = match &raw.surface {
            None => None,
            Some(rs) => {
                let links = crate::model::node::peer_links(&nodes);
                let mut probs = Problems::default();
                let s = crate::config::surface::build(
                    rs,
                    rx.rooftop.unwrap_or(true),
                    dir,
                    &file,
                    &nodes_path.display().to_string(),
                    &grid,
                    &frame,
                    &nodes,
                    &links,
                    &mut probs,
                );
                probs.into_result()?;
                s.map(std::sync::Arc::new)
            }
        };
        Ok(Scenario {
            name: raw.name,
            path: path.to_path_buf(),
            nodes_path,
            nodes,
            radio: Radio { bandwidth_mhz: r.bandwidth_mhz, noise_figure_db: r.noise_figure_db },
            pathloss,
            receiver: Receiver { height_m: rx_height, antenna: receiver_antenna },
            grid,
            frame,
            thresholds: thr,
            draw,
            // Incomplete defaults are fine when every node completes them.
            default_antenna: raw.antenna.resolve(&mut |_, _| {}),
            fading: FadingSpec {
                signal: sig.unwrap_or(crate::model::fading::Fading::NONE),
                interferer: intf.unwrap_or(crate::model::fading::Fading::NONE),
                shadowing_db,
            },
            links: LinkSettings { capacity_gap_db, max_spectral_efficiency: max_se },
            weather,
            channel_pathloss,
            spectrum,
            install: InstallSettings { declination_date: declination_date.unwrap_or((2026, 1)) },
            surface,
            colour_scale,
            context,
        })
    }
}
