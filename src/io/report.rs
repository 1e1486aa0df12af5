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
.small{font-size:12px;color:#44506a}*{box-sizing:border-box}img,svg{max-width:100%;height:auto}th,td{white-space:normal;overflow-wrap:anywhere}\
.facts{font-size:12px;color:#44506a;overflow-wrap:anywhere}\
@media (max-width:1100px){main,header{padding:12px}table.stack,table.stack tbody,table.stack tr,table.stack td{display:block;width:auto}\
table.stack thead{display:none}table.stack tr{border:1px solid #d8d4c8;margin:0 0 10px;background:#fff}\
table.stack td{border:none;border-bottom:1px solid #eee;text-align:left;padding:4px 8px}\
table.stack td::before{content:attr(data-label) \": \";font-weight:600;color:#44506a}}\
.cards{display:grid;grid-template-columns:repeat(auto-fill,minmax(min(100%,300px),1fr));gap:14px}\
.card{background:#fff;border:1px solid #d8d4c8;border-top:6px solid #22304a;padding:12px 14px}\
.card h3{margin:0 0 6px;font-size:17px;overflow-wrap:anywhere}.card dl{clear:both;display:grid;grid-template-columns:auto 1fr;gap:3px 10px;margin:8px 0;font-size:14px}\
.card dt{color:#44506a}.card dd{margin:0;font-weight:600;overflow-wrap:break-word;min-width:0}.card dd.warn{color:#a11d1d}\
.keepout{background:#fff3d6;border-left:6px solid #b8621b;padding:6px 10px;font-size:14px;margin:8px 0}\
.card .dial{float:right;width:88px;height:88px;margin:-4px 0 4px 8px}.card p.small{clear:both}\
@media print{header{background:none;color:#000}.card{break-after:page;break-inside:avoid;border:1px solid #000}.scroll{overflow:visible}}";

/// Adds `data-label` (the column's name) to each `<td` of a table row, in order, so a
/// narrow screen can show the row as a stack of labelled fields.
fn label_cells(row: &str, cols: &[&str]) -> String {
    let mut out = String::with_capacity(row.len() + 24 * cols.len());
    let mut rest = row;
    let mut k = 0;
    while let Some(i) = rest.find("<td") {
        out += &rest[..i + 3];
        if let Some(c) = cols.get(k) {
            out += &format!(" data-label=\"{}\"", esc(c));
        }
        k += 1;
        rest = &rest[i + 3..];
    }
    out += rest;
    out
}

/// A bearing dial for a card (inline SVG): true north up, the azimuth to set as an arrow,
/// magnetic north as an orange tick at the declination.
fn bearing_dial(azimuth_true_deg: f64, declination_deg: f64) -> String {
    let (c, r) = (52.0, 44.0);
    let at = |deg: f64, rr: f64| {
        let a = deg.to_radians();
        (c + rr * a.sin(), c - rr * a.cos())
    };
    let mut ticks = String::new();
    for k in 0..12 {
        let (x0, y0) = at(30.0 * k as f64, r - 5.0);
        let (x1, y1) = at(30.0 * k as f64, r);
        ticks += &format!("<line x1=\"{x0:.1}\" y1=\"{y0:.1}\" x2=\"{x1:.1}\" y2=\"{y1:.1}\" stroke=\"#44506a\"/>");
    }
    let (ax, ay) = at(azimuth_true_deg, r - 8.0);
    let (l1x, l1y) = at(azimuth_true_deg - 8.0, r - 20.0);
    let (l2x, l2y) = at(azimuth_true_deg + 8.0, r - 20.0);
    let (mx0, my0) = at(declination_deg, r + 2.0);
    let (mx1, my1) = at(declination_deg, r - 10.0);
    format!(
        "<svg class=\"dial\" viewBox=\"0 0 104 104\" role=\"img\" aria-label=\"azimuth {azimuth_true_deg:.1} degrees true\">\
<circle cx=\"52\" cy=\"52\" r=\"44\" fill=\"#fff\" stroke=\"#22304a\" stroke-width=\"2\"/>{ticks}\
<text x=\"52\" y=\"20\" font-size=\"11\" text-anchor=\"middle\" fill=\"#22304a\">N</text>\
<line x1=\"{mx0:.1}\" y1=\"{my0:.1}\" x2=\"{mx1:.1}\" y2=\"{my1:.1}\" stroke=\"#b8621b\" stroke-width=\"3\"/>\
<line x1=\"52\" y1=\"52\" x2=\"{ax:.1}\" y2=\"{ay:.1}\" stroke=\"#a11d1d\" stroke-width=\"3\"/>\
<polygon points=\"{ax:.1},{ay:.1} {l1x:.1},{l1y:.1} {l2x:.1},{l2y:.1}\" fill=\"#a11d1d\"/>\
<circle cx=\"52\" cy=\"52\" r=\"3\" fill=\"#22304a\"/></svg>"
    )
}

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
        "<section><h2>Rain and availability</h2><p class=\"small\">Rain rate exceeded for 0.01 % of an average year: {} mm/h. Specific attenuation after ITU-R P.838-3 for each transmitter's polarisation and path elevation; attenuation exceeded on the path after ITU-R P.530 ({}). Fade margin: {}. Target {} % of the year. The method covers 0.001 % to 1 % of the time; figures outside it are shown as bounds. Multipath fading and other hydrometeors are not included. {}.</p><div class=\"scroll\"><table class=\"stack\"><thead><tr>",
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
    const RAIN_COLS: &[&str] = &[
        "from",
        "to",
        "length m",
        "gas dB",
        "fade margin dB",
        "rain fade at target dB",
        "availability",
        "outage min/year",
        "target",
    ];
    for &c in RAIN_COLS {
        h += &format!("<th class=\"{}\">{}</th>", if c == "from" || c == "to" { "l" } else { "" }, esc(c));
    }
    h += "</tr></thead><tbody>";
    for r in links {
        let below = r.meets_target == Some(false);
        h += &label_cells(
            &format!(
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
            ),
            RAIN_COLS,
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
    inputs: &[(std::path::PathBuf, String)],
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
    h += &format!(
        "<p class=\"facts\">Generated {} by lobemap {}. Inputs (SHA-256): {}</p>",
        crate::io::heatmap::today_iso(),
        env!("CARGO_PKG_VERSION"),
        inputs
            .iter()
            .map(|(p, hex)| format!(
                "{} {}",
                esc(&p.file_name().map_or_else(|| p.display().to_string(), |f| f.to_string_lossy().into_owned())),
                hex
            ))
            .collect::<Vec<_>>()
            .join("; ")
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
    const LINK_COLS: &[&str] = &[
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
    ];
    h += "<section><h2>Planned links</h2><div class=\"scroll\"><table class=\"stack\"><thead><tr>";
    for &c in LINK_COLS {
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
        h += &label_cells(
            &format!(
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
            ),
            LINK_COLS,
        );
    }
    h += &format!(
        "</tbody></table></div><p class=\"small\">Capacity: B·log2(1 + SINR/Γ) with Γ = {} dB, at most {} bit/s/Hz. Misalignment beyond half the beamwidth is marked with the azimuth to set.</p></section>",
        sc.links.capacity_gap_db, sc.links.max_spectral_efficiency
    );
    h += &weather_section(sc, links);
    h += &format!(
        "<section id=\"cards\"><h2>Installer cards</h2><p class=\"small\">One card per node, one per page when printed. Azimuth to set: toward the peer along the geodesic, from true north at the node (the dial: red arrow; orange tick: magnetic north). Magnetic azimuth = azimuth to set − declination (World Magnetic Model, {}). RF keep-out: far-field distance on boresight where EIRP/(4πd²) falls to {} W/m² ({}).</p><div class=\"cards\">",
        esc(&sheet.declination_date),
        sheet.limit_w_m2,
        esc(&sheet.limit_name)
    );
    for r in &sheet.rows {
        let name = if r.name.is_empty() { String::new() } else { format!(" · {}", esc(&r.name)) };
        let azimuth = if r.differs_from_plan {
            format!(
                "<dd class=\"warn\">{:.1}° (planned {:.1}°: change it)</dd>",
                r.azimuth_true_deg, r.azimuth_planned_deg
            )
        } else {
            format!("<dd>{:.1}°</dd>", r.azimuth_true_deg)
        };
        h += &format!(
            "<article class=\"card\">{}<h3>{}{name}</h3><dl><dt>Position</dt><dd>{:.6}, {:.6}</dd><dt>Mount at</dt><dd>{} m above ground</dd><dt>Azimuth, true</dt>{azimuth}<dt>Azimuth, magnetic</dt><dd>{:.1}° (declination {:.2}°)</dd><dt>Down-tilt</dt><dd>{}</dd><dt>Channel / pol.</dt><dd>{} ({} GHz) / {}</dd><dt>Peer</dt><dd>{}</dd><dt>Expected at peer</dt><dd>{}</dd><dt>EIRP</dt><dd>{:.1} dBm</dd></dl><div class=\"keepout\"><strong>RF keep-out {:.2} m</strong> in front of the antenna while it transmits (reference {} W/m²).</div><p class=\"small\">{}</p></article>",
            bearing_dial(r.azimuth_true_deg, r.declination_deg),
            esc(&r.id),
            r.lat,
            r.lon,
            r.height_m,
            r.azimuth_magnetic_deg,
            r.declination_deg,
            r.downtilt_deg.map(|v| format!("{v:.2}°")).unwrap_or("–".into()),
            esc(&r.channel),
            r.centre_ghz,
            esc(&r.polarisation),
            if r.peer.is_empty() { "–".to_string() } else { esc(&r.peer) },
            r.expected_at_peer_dbm.map(|v| format!("{v:.1} dBm")).unwrap_or("–".into()),
            r.eirp_dbm,
            r.keepout_m,
            sheet.limit_w_m2,
            crate::jobs::install::CAUTIONS.iter().map(|c| esc(c)).collect::<Vec<_>>().join(" ")
        );
    }
    h += "</div></section>";
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
