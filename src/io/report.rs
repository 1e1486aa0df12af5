//! A self-contained HTML report for the planner and the installer: maps embedded as data
//! URIs, the link table, the installer table and the cautions. No scripts, no external
//! assets: it opens offline on a tablet.

use crate::jobs::install::InstallSheet;
use crate::jobs::links::LinkRow;
use crate::model::scenario::Scenario;
use base64::Engine as _;

/// One embedded map.
pub struct MapImage {
    /// Heading.
    pub title: String,
    /// PNG bytes.
    pub png: Vec<u8>,
    /// Caption under the map.
    pub caption: String,
}

/// One link's path profile (an SVG document).
pub struct ProfileImage {
    /// Heading.
    pub title: String,
    /// SVG text.
    pub svg: String,
}

/// Escapes text for HTML element content and attribute values.
pub fn esc(s: &str) -> String {
    s.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;").replace('"', "&quot;").replace('\'', "&#39;")
}

const STYLE: &str = "body{font-family:system-ui,-apple-system,'Segoe UI',sans-serif;margin:0;color:#1c2230;background:#f7f6f2}\
header{background:#22304a;color:#fff;padding:18px 28px}header h1{margin:0;font-size:24px}header p{margin:4px 0 0;opacity:.85}\
main{padding:18px 28px;max-width:1500px}section{margin:0 0 28px}h2{font-size:19px;border-bottom:2px solid #22304a;padding-bottom:4px}\
.caution{background:#fff3d6;border-left:6px solid #b8621b;padding:10px 16px;margin:0 0 18px}.caution li{margin:4px 0}\
figure{margin:0 0 20px;background:#fff;padding:10px;border:1px solid #d8d4c8}figure img{max-width:100%;height:auto;display:block}\
figcaption{font-size:13px;color:#44506a;margin-top:6px}table{border-collapse:collapse;font-size:13px;background:#fff;width:100%}\
th,td{border:1px solid #d8d4c8;padding:4px 6px;text-align:right;white-space:nowrap}th{background:#e8e5dc;position:sticky;top:0}\
td.l,th.l{text-align:left}tr.fail td{background:#fbe3e3}td.warn{color:#a11d1d;font-weight:600}.scroll{overflow-x:auto}\
.small{font-size:12px;color:#44506a}";

/// An SVG document without its XML declaration, for inlining in HTML.
fn strip_xml_header(svg: &str) -> &str {
    match svg.find("<svg") {
        Some(i) => &svg[i..],
        None => svg,
    }
}

/// The cautions shown at the top of the report (and in README terms).
pub fn cautions(sheet: &InstallSheet) -> Vec<String> {
    vec![
        format!(
            "RF exposure: stay outside the keep-out distance in front of every antenna while it transmits ({}; the distances below are far-field estimates on boresight). Power down or lock out transmitters before working on or in front of them, and follow the exposure rules that apply where you work.",
            sheet.limit_name
        ),
        "Work at height: mounting and aligning antennas means poles, masts and roofs. Only trained people with fall protection, a rescue plan and the permits local safety codes require.".into(),
        "Transmit power, EIRP and licensing: this report does not check regulatory limits. Power, EIRP, frequency and channel use must comply with the licence or licence-exempt rules in force at the site.".into(),
        "Estimates: all figures come from a model (ideal antenna patterns, mean powers with statistical fading, and line of sight over the ground and buildings given, if any). Confirm the path on site (a clear view between the antennas, nothing growing or being built into it) and by measurement, and defer to local codes and licensed practice.".into(),
    ]
}

/// The gaseous loss and, with `[rain]`, each link's fade margin, rain fade at the target,
/// availability and outage.
fn weather_section(sc: &Scenario, links: &[LinkRow]) -> String {
    let w = sc.weather();
    let gas = w.gas_words(sc.pathloss.absorption_db_per_km());
    let Some(rain) = w.rain else {
        return format!(
            "<section><h2>Weather</h2><p class=\"small\">{}; no [rain] given, so no availability figures.</p></section>",
            esc(&gas)
        );
    };
    let mut h = format!(
        "<section><h2>Rain and availability</h2><p class=\"small\">Rain rate exceeded for 0.01 % of an average year: {} mm/h. Specific attenuation after ITU-R P.838-3 for each transmitter's polarisation and path elevation; attenuation exceeded on the path after ITU-R P.530 ({}). Fade margin: {}. Target {} % of the year. The method covers 0.001 % to 1 % of the time; figures outside it are shown as bounds. Multipath fading and other hydrometeors are not included. {}.</p><div class=\"scroll\"><table><thead><tr>",
        rain.rate_mm_h,
        rain.scaling_words(),
        match w.interferers {
            crate::model::weather::InterfererFade::None =>
                "the wanted path fades, interferers keep their clear-air levels (conservative)",
            crate::model::weather::InterfererFade::Together =>
                "every path fades by its own rain attenuation at the same percentage of time (fully correlated rain)",
        },
        w.target_pct,
        esc(&gas)
    );
    for c in [
        "from",
        "to",
        "length m",
        "gas dB",
        "fade margin dB",
        "rain fade at target dB",
        "availability",
        "outage min/year",
        "target",
    ] {
        h += &format!("<th class=\"{}\">{}</th>", if c == "from" || c == "to" { "l" } else { "" }, esc(c));
    }
    h += "</tr></thead><tbody>";
    for r in links {
        let below = r.meets_target == Some(false);
        h += &format!(
            "<tr class=\"{}\"><td class=\"l\">{}</td><td class=\"l\">{}</td><td>{:.1}</td><td>{:.2}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
            if below { "fail" } else { "" },
            esc(&r.from),
            esc(&r.to),
            r.length_m,
            r.weather.gas_db,
            r.weather.fade_margin_db.map(|v| format!("{v:.2}")).unwrap_or("–".into()),
            r.weather.rain_fade_db.map(|v| format!("{v:.2}")).unwrap_or("–".into()),
            esc(&r.availability_words().unwrap_or("–".into())),
            r.outage_words().unwrap_or("–".into()),
            if below { "BELOW" } else { "ok" }
        );
    }
    h += "</tbody></table></div></section>";
    h
}

/// The report page.
pub fn html(
    sc: &Scenario,
    links: &[LinkRow],
    sheet: &InstallSheet,
    maps: &[MapImage],
    profiles: &[ProfileImage],
) -> String {
    let mut h = String::with_capacity(1 << 20);
    h += "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">";
    h += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">";
    h += &format!("<title>lobemap report: {}</title><style>{STYLE}</style></head><body>", esc(&sc.name));
    h += &format!(
        "<header><h1>Site report: {}</h1><p>{} nodes, {} planned links, {:.2} GHz, {} MHz, noise {:.2} dBm; SINR threshold {} dB, coverage target {}</p></header><main>",
        esc(&sc.name),
        sc.nodes.len(),
        links.len(),
        sc.pathloss.frequency_ghz(),
        sc.radio.bandwidth_mhz,
        sc.noise_dbm(),
        sc.thresholds.sinr_db,
        sc.thresholds.coverage_target
    );
    h += "<section class=\"caution\"><strong>Cautions</strong><ul>";
    for c in cautions(sheet) {
        h += &format!("<li>{}</li>", esc(&c));
    }
    h += "</ul></section>";
    if !maps.is_empty() {
        h += "<section><h2>Maps</h2>";
        for m in maps {
            let b64 = base64::engine::general_purpose::STANDARD.encode(&m.png);
            h += &format!(
                "<figure><img alt=\"{}\" src=\"data:image/png;base64,{b64}\"><figcaption><strong>{}</strong>. {}</figcaption></figure>",
                esc(&m.title),
                esc(&m.title),
                esc(&m.caption)
            );
        }
        h += "</section>";
    }
    h += "<section><h2>Planned links</h2><div class=\"scroll\"><table><thead><tr>";
    for c in [
        "from",
        "to",
        "length m",
        "bearing °",
        "misalign tx °",
        "misalign rx °",
        "signal dBm",
        "interference dBm",
        "SINR dB",
        "P[SINR≥T]",
        "margin dB",
        "Mbit/s",
        "status",
        "path",
        "top interferers",
    ] {
        h += &format!(
            "<th class=\"{}\">{}</th>",
            if c.starts_with("top") || c == "from" || c == "to" || c == "path" { "l" } else { "" },
            esc(c)
        );
    }
    h += "</tr></thead><tbody>";
    for r in links {
        let warn = |m: bool, v: f64, should: f64| {
            if m { format!("<td class=\"warn\">{v:.1} (set {should:.1})</td>") } else { format!("<td>{v:.1}</td>") }
        };
        let tops = r
            .top_interferers
            .iter()
            .map(|s| format!("{} {:.0}%", esc(&s.id), s.share * 100.0))
            .collect::<Vec<_>>()
            .join(", ");
        h += &format!(
            "<tr class=\"{}\"><td class=\"l\">{}</td><td class=\"l\">{}</td><td>{:.1}</td><td>{:.1}</td>{}{}<td>{:.1}</td><td>{}</td><td>{:.2}</td><td>{:.4}</td><td>{:.2}</td><td>{:.0}</td><td>{}</td><td class=\"l{}\">{}</td><td class=\"l\">{}</td></tr>",
            if r.passes { "" } else { "fail" },
            esc(&r.from),
            esc(&r.to),
            r.length_m,
            r.bearing_deg,
            warn(r.misaligned_from, r.misalign_from_deg, r.azimuth_from_should_deg),
            warn(r.misaligned_to, r.misalign_to_deg, r.azimuth_to_should_deg),
            r.signal_dbm,
            r.interference_dbm.map(|v| format!("{v:.1}")).unwrap_or("–".into()),
            r.sinr_db,
            r.coverage,
            r.margin_db,
            r.capacity_mbps,
            if r.passes { "ok" } else { "FAIL" },
            if r.clearance_ok { "" } else { " warn" },
            esc(&r.path_verdict()),
            tops
        );
    }
    h += &format!(
        "</tbody></table></div><p class=\"small\">Capacity: B·log2(1 + SINR/Γ) with Γ = {} dB, at most {} bit/s/Hz. Misalignment beyond half the beamwidth is marked with the azimuth to set.</p></section>",
        sc.links.capacity_gap_db, sc.links.max_spectral_efficiency
    );
    h += &weather_section(sc, links);
    h += &format!(
        "<section><h2>Installer sheet</h2><p class=\"small\">Azimuth to set: toward the peer along the geodesic, from true north at the node; where it differs from the planned azimuth the cell is marked and the planned value follows in brackets. Magnetic azimuth = azimuth to set − declination (World Magnetic Model, {}). Keep-out: far-field distance on boresight where EIRP/(4πd²) falls to {} W/m² ({}).</p><div class=\"scroll\"><table><thead><tr>",
        esc(&sheet.declination_date),
        sheet.limit_w_m2,
        esc(&sheet.limit_name)
    );
    for c in [
        "id",
        "name",
        "lat",
        "lon",
        "height m",
        "channel / pol.",
        "azimuth to set, true °",
        "declination °",
        "azimuth magnetic °",
        "peer",
        "down-tilt °",
        "expected at peer dBm",
        "EIRP dBm",
        "keep-out m",
    ] {
        h += &format!(
            "<th class=\"{}\">{}</th>",
            if c == "id" || c == "name" || c == "peer" { "l" } else { "" },
            esc(c)
        );
    }
    h += "</tr></thead><tbody>";
    for r in &sheet.rows {
        h += &format!(
            "<tr><td class=\"l\">{}</td><td class=\"l\">{}</td><td>{:.6}</td><td>{:.6}</td><td>{}</td><td class=\"l\">{} ({} GHz) / {}</td>{}<td>{:.2}</td><td>{:.1}</td><td class=\"l\">{}</td><td>{}</td><td>{}</td><td>{:.1}</td><td>{:.2}</td></tr>",
            esc(&r.id),
            esc(&r.name),
            r.lat,
            r.lon,
            r.height_m,
            esc(&r.channel),
            r.centre_ghz,
            esc(&r.polarisation),
            if r.differs_from_plan {
                format!("<td class=\"warn\">{:.1} (planned {:.1})</td>", r.azimuth_true_deg, r.azimuth_planned_deg)
            } else {
                format!("<td>{:.1}</td>", r.azimuth_true_deg)
            },
            r.declination_deg,
            r.azimuth_magnetic_deg,
            esc(&r.peer),
            r.downtilt_deg.map(|v| format!("{v:.2}")).unwrap_or("–".into()),
            r.expected_at_peer_dbm.map(|v| format!("{v:.1}")).unwrap_or("–".into()),
            r.eirp_dbm,
            r.keepout_m
        );
    }
    h += "</tbody></table></div></section>";
    if !profiles.is_empty() {
        h += "<section><h2>Path profiles</h2><p class=\"small\">Ground and buildings raised by the Earth bulge, the ray between the antennas and the first Fresnel zone around it. The common rule for a line-of-sight link keeps 60 % of the first Fresnel zone clear.</p>";
        for p in profiles {
            h += &format!("<figure>{}<figcaption>{}</figcaption></figure>", strip_xml_header(&p.svg), esc(&p.title));
        }
        h += "</section>";
    }
    let model = if sc.surface.is_some() {
        "line of sight and knife-edge diffraction over the given ground and buildings"
    } else {
        "line of sight over flat ground (no [surface] given)"
    };
    h += &format!(
        "<p class=\"small\">Generated by lobemap. Model: {model}, horizontal antenna cuts, mean powers; see the README for assumptions and limits.</p></main></body></html>\n"
    );
    h
}
