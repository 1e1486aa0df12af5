//! The `links` command: the link check, the installer sheet and the report, staged and
//! committed together.

use crate::engine::{Engine, LayerSet, Options};
use crate::error::{Error, Problem};
use crate::geometry::regions::{outlines, regions};
use crate::io::heatmap::{MapSpec, render};
use crate::io::staging::Staging;
use crate::model::scenario::Scenario;
use crate::run::map::{check_memory, markers_and_links};
use std::path::PathBuf;

/// Options of the links job.
#[derive(Debug, Clone)]
pub struct LinksOptions {
    /// Output folder.
    pub out: PathBuf,
    /// Monte Carlo check of each link's coverage: (trials, seed).
    pub monte_carlo: Option<(usize, u64)>,
    /// Embed interference, coverage and SINR maps in the report.
    pub maps: bool,
    /// Memory limit for the maps, MiB.
    pub max_memory_mib: u64,
}

/// What the links job produced.
pub struct LinksResult {
    /// One row per planned link.
    pub rows: Vec<crate::jobs::links::LinkRow>,
    /// The installer sheet.
    pub sheet: crate::jobs::install::InstallSheet,
    /// Paths written.
    pub files: Vec<PathBuf>,
}

/// Runs the link check and writes `links.csv`, `links.geojson`, `install.csv` (with its
/// sidecar `install.json`) and `report.html` into `opts.out`.
pub fn run_links(sc: &Scenario, opts: &LinksOptions) -> Result<LinksResult, Error> {
    let mut owned =
        ["links.csv", "links.geojson", "install.csv", "install.json", "report.html"].map(String::from).to_vec();
    owned.extend(crate::model::node::peer_links(&sc.nodes).iter().flat_map(|&(a, b)| {
        let stem = profile_file(&sc.nodes[a].id, &sc.nodes[b].id);
        [format!("{stem}.svg"), format!("{stem}.png")]
    }));
    let st = Staging::folder(&opts.out, &sc.input_files(), owned)?;
    let rows = crate::jobs::links::links(sc, opts.monte_carlo);
    let sheet = crate::jobs::install::sheet(sc).map_err(|m| {
        Error::input(Problem::new(sc.path.display().to_string(), Some("[install]".into()), "declination_date", m))
    })?;
    let mut maps = Vec::new();
    if opts.maps {
        let layers = LayerSet {
            interference: true,
            sinr: true,
            coverage: true,
            availability: sc.weather().rain.is_some(),
            ..LayerSet::NONE
        };
        check_memory(sc, layers.count(), opts.max_memory_mib)?;
        let l = Engine::new(sc).run(&Options { layers, cutoff_m: None, progress: crate::progress::shown() });
        let (markers, links) = markers_and_links(sc);
        let facts = crate::io::heatmap::sheet_facts(sc);
        let grid = &sc.grid;
        let noise = sc.noise_dbm();
        let mut add = |name: &str,
                       title: String,
                       unit: &str,
                       data: &[f32],
                       outlines: Vec<Vec<(f64, f64)>>,
                       caption: String|
         -> Result<(), Error> {
            let r = render(&MapSpec {
                grid,
                data,
                title: &title,
                unit,
                markers: &markers,
                links: &links,
                outlines: &outlines,
                footprints: sc.surface().map_or(&[][..], |s| s.outlines()),
                range: crate::io::heatmap::layer_range(&sc.colour_scale, name, unit, data),
                facts: &facts,
                context: &sc.context.lines,
            })
            .map_err(|e| Error::Output { path: opts.out.join("report.html"), source: std::io::Error::other(e) })?;
            maps.push(crate::io::report::MapImage { title, png: r, caption });
            Ok(())
        };
        if let Some(c) = &l.coverage {
            let target = sc.thresholds.coverage_target;
            add(
                "coverage",
                format!("Coverage T={} dB", sc.thresholds.sinr_db),
                crate::io::heatmap::PROBABILITY,
                c,
                outlines(&regions(grid, c, target as f32, true)),
                format!(
                    "Probability that a receiver at each spot, served by its best node, reaches the SINR threshold with fading; crimson outlines: below the {target} target."
                ),
            )?;
        }
        if let Some(i) = &l.interference {
            let level = noise + sc.thresholds.hotspot_i_over_n_db;
            add(
                "interference",
                "Interference".into(),
                "dBm",
                i,
                outlines(&regions(grid, i, level as f32, false)),
                format!(
                    "Aggregate interference at a receiver served by its best node; crimson outlines: hot spots at or above {level:.1} dBm (noise + {} dB).",
                    sc.thresholds.hotspot_i_over_n_db
                ),
            )?;
        }
        if let Some(a) = &l.availability {
            let target = sc.weather().target_pct;
            add(
                "availability",
                "Availability".into(),
                crate::io::heatmap::AVAILABILITY,
                a,
                outlines(&crate::run::map::short_of_target(grid, a, target)),
                format!(
                    "Percentage of an average year a terminal at each spot, served by its best node, keeps its SINR above the threshold in rain (ITU-R P.530 on the server's path); crimson outlines: served in clear air but short of the {target} % target."
                ),
            )?;
        }
        if let Some(s) = &l.sinr {
            add(
                "sinr",
                "Mean SINR".into(),
                "dB",
                s,
                Vec::new(),
                "Mean SINR without fading; nodes with beam wedges, planned links as lines.".into(),
            )?;
        }
    }
    let profiles = link_profiles(sc, &rows)
        .map_err(|e| Error::Output { path: opts.out.join("report.html"), source: std::io::Error::other(e) })?;
    for (name, p, png) in &profiles {
        st.write(&format!("{name}.svg"), p.svg.as_bytes())?;
        st.write(&format!("{name}.png"), png)?;
    }
    let profiles: Vec<_> = profiles.into_iter().map(|(_, p, _)| p).collect();
    st.write("links.csv", crate::jobs::links::csv(&rows).as_bytes())?;
    st.write("links.geojson", crate::jobs::links::geojson(sc, &rows).to_string().as_bytes())?;
    st.write("install.csv", crate::jobs::install::csv(&sheet).as_bytes())?;
    let side = serde_json::to_string_pretty(&crate::jobs::install::sidecar(&sheet))
        .map_err(|e| Error::Output { path: opts.out.join("install.json"), source: e.into() })?;
    st.write("install.json", side.as_bytes())?;
    let inputs = crate::run::tiles::input_hashes(sc)?;
    st.write("report.html", crate::io::report::html(sc, &rows, &sheet, &maps, &profiles, &inputs).as_bytes())?;
    let files = st.commit()?;
    Ok(LinksResult { rows, sheet, files })
}

/// The file stem of a link's profile: `profile-<from>-<to>` (`.svg` and `.png`), with any character of the ids
/// other than letters, digits, `-`, `_` and `.` written as `_`.
pub fn profile_file(a: &str, b: &str) -> String {
    let clean = |s: &str| {
        s.chars().map(|c| if c.is_ascii_alphanumeric() || "-_.".contains(c) { c } else { '_' }).collect::<String>()
    };
    format!("profile-{}-{}", clean(a), clean(b))
}

/// One profile per planned link (both directions share it) when the scenario has a surface:
/// the file stem, the SVG for the report and the PNG.
fn link_profiles(
    sc: &Scenario,
    rows: &[crate::jobs::links::LinkRow],
) -> Result<Vec<(String, crate::io::report::ProfileImage, Vec<u8>)>, String> {
    let Some(surface) = sc.surface() else { return Ok(Vec::new()) };
    let lambda = crate::model::obstruction::wavelength_m(sc.pathloss.frequency_ghz());
    let mut out = Vec::new();
    for (a, b) in crate::model::node::peer_links(&sc.nodes) {
        let (na, nb) = (&sc.nodes[a], &sc.nodes[b]);
        let profile =
            surface.profile(&sc.frame, (na.lon, na.lat, sc.node_alt_m(na)), (nb.lon, nb.lat, sc.node_alt_m(nb)));
        let verdict = rows
            .iter()
            .find(|r| (r.from == na.id && r.to == nb.id) || (r.from == nb.id && r.to == na.id))
            .map(|r| r.path_verdict())
            .unwrap_or_default();
        let title = format!("{} – {}", na.id, nb.id);
        let spec = crate::io::profile::ProfileSpec {
            title: &title,
            verdict: &verdict,
            profile: &profile,
            wavelength_m: lambda,
            earth_k: surface.earth_k(),
        };
        let (svg, png) = (crate::io::profile::svg(&spec)?, crate::io::profile::png(&spec)?);
        out.push((
            profile_file(&na.id, &nb.id),
            crate::io::report::ProfileImage { title: format!("{title}: {verdict}"), svg },
            png,
        ));
    }
    Ok(out)
}
