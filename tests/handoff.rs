//! Hand-off outputs read by independent clients: GDAL (`gdalinfo`, `ogrinfo`, from Debian's
//! gdal-bin, which `.ci/run` installs) and Python's `csv` module (the standard library of
//! whatever python3 the machine has). Each check names the client; a missing client is a
//! loud skip, never a pass.

use crate::util::{run, site, stderr};
use std::path::Path;
use std::process::Command;

/// Whether `tool` is installed: it can be started (its answer to `--version`, which
/// poppler's tools reject, does not matter).
fn have(tool: &str) -> bool {
    Command::new(tool).arg("--version").output().is_ok()
}

fn skip(tool: &str) {
    eprintln!("!!!!! SKIPPED: {tool} is not installed; .ci/run installs it !!!!!");
}

/// `gdalinfo -json` of a file, parsed.
fn gdalinfo(path: &Path) -> serde_json::Value {
    let o = Command::new("gdalinfo").arg("-json").arg(path).output().unwrap();
    assert!(o.status.success(), "{}: {}", path.display(), String::from_utf8_lossy(&o.stderr));
    serde_json::from_slice(&o.stdout).unwrap()
}

fn demo_map(out: &Path, layers: &str) {
    let o = run(&[
        "map",
        "sites/harbourlight/scenario.toml",
        "--layers",
        layers,
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
}

/// GDAL's GTiff driver reports the Cloud-Optimised layout, DEFLATE with the floating-point
/// predictor, overviews, the band description and the unit; the server layer is an integer
/// raster whose category names are the node ids (GDAL raster data model: category names).
#[test]
fn geotiffs_are_cogs_gdal_describes() {
    if !have("gdalinfo") {
        return skip("gdalinfo");
    }
    let d = tempfile::tempdir().unwrap();
    demo_map(d.path(), "total,sinr,server");
    let total = gdalinfo(&d.path().join("total.tif"));
    let md = &total["metadata"]["IMAGE_STRUCTURE"];
    assert_eq!(md["LAYOUT"], "COG", "{md}");
    assert_eq!(md["COMPRESSION"], "DEFLATE", "{md}");
    assert_eq!(md["PREDICTOR"], "3", "{md}");
    let band = &total["bands"][0];
    assert_eq!(band["type"], "Float32");
    assert_eq!(band["description"], "total: Total received");
    assert_eq!(band["unit"], "dBm");
    assert_eq!(band["noDataValue"], -9999.0);
    assert_eq!(band["block"], serde_json::json!([256, 256]));
    assert!(!band["overviews"].as_array().unwrap().is_empty(), "the demo grid is wider than one tile: {band}");
    assert_eq!(gdalinfo(&d.path().join("sinr.tif"))["bands"][0]["unit"], "dB");
    let server = gdalinfo(&d.path().join("server.tif"));
    let band = &server["bands"][0];
    assert_eq!(band["type"], "Int32");
    let names: Vec<String> =
        band["categories"].as_array().unwrap().iter().map(|v| v.as_str().unwrap().to_string()).collect();
    let nodes: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string("sites/harbourlight/nodes.geojson").unwrap()).unwrap();
    let ids: Vec<String> = nodes["features"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["properties"]["id"].as_str().unwrap().to_string())
        .collect();
    assert_eq!(names, ids);
}

/// The map-only PNG covers exactly the GeoTIFF's grid in GDAL (world file + PAM CRS): same
/// size, same geotransform to 1e-12 of a pixel, EPSG:4326, and an alpha band for nodata.
#[test]
fn map_png_extent_equals_the_geotiff() {
    if !have("gdalinfo") {
        return skip("gdalinfo");
    }
    let d = tempfile::tempdir().unwrap();
    demo_map(d.path(), "interference");
    let tif = gdalinfo(&d.path().join("interference.tif"));
    let png = gdalinfo(&d.path().join("interference.png"));
    assert_eq!(tif["size"], png["size"]);
    let (a, b) = (tif["geoTransform"].as_array().unwrap(), png["geoTransform"].as_array().unwrap());
    let pixel = a[1].as_f64().unwrap();
    for (x, y) in a.iter().zip(b) {
        assert!((x.as_f64().unwrap() - y.as_f64().unwrap()).abs() <= 1e-12 * pixel.max(1.0), "{a:?} vs {b:?}");
    }
    let wkt = png["coordinateSystem"]["wkt"].as_str().unwrap_or("");
    assert!(wkt.contains("4326"), "no CRS on the PNG: {png}");
    let bands = png["bands"].as_array().unwrap();
    assert_eq!(bands.len(), 4);
    assert_eq!(bands[3]["colorInterpretation"], "Alpha");
    assert!(d.path().join("interference-sheet.png").exists());
}

const TOML: &str = r#"name = "quoting"
nodes = "nodes.geojson"
[radio]
frequency_ghz = 60.48
bandwidth_mhz = 2160
noise_figure_db = 7
[propagation]
model = "free-space"
[antenna]
pattern = "parabolic"
beamwidth_deg = 3
gain_dbi = 34
sidelobe_dbi = -5
power_dbm = 10
[grid]
cell_m = 10
margin_m = 50
[install]
declination_date = "2026-12-01"
"#;

/// Ids and names with a comma and quotes, as a GIS file may hold them.
const NODES: &str = r#"{"type":"FeatureCollection","features":[
{"type":"Feature","geometry":{"type":"Point","coordinates":[8.000,50.000]},"properties":{"id":"P,1 \"east\"","name":"Mast, \"old\" yard","azimuth_deg":63.9,"peer":"Q2","height_m":6}},
{"type":"Feature","geometry":{"type":"Point","coordinates":[8.004,50.001]},"properties":{"id":"Q2","name":"Roof","azimuth_deg":243.9,"peer":"P,1 \"east\"","height_m":6}}
]}"#;

fn quoting_links() -> tempfile::TempDir {
    let (d, p) = site(TOML, NODES);
    let out = d.path().join("out");
    let o = run(&["links", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--no-maps", "--quiet"]);
    assert!(o.status.success(), "{}", stderr(&o));
    d
}

/// GDAL's CSV driver reads links.csv and install.csv with the intended header (first line,
/// no comment taken as a header) and the awkward id whole.
#[test]
fn gdal_csv_driver_reads_every_csv() {
    if !have("ogrinfo") {
        return skip("ogrinfo");
    }
    let d = quoting_links();
    for (file, first_field, second_field) in [("links.csv", "from", "to"), ("install.csv", "id", "name")] {
        let path = d.path().join("out").join(file);
        let o = Command::new("ogrinfo").args(["-ro", "-al", "-q"]).arg(&path).output().unwrap();
        let text = String::from_utf8_lossy(&o.stdout);
        assert!(o.status.success() && o.stderr.is_empty(), "{file}: {}", String::from_utf8_lossy(&o.stderr));
        assert!(text.contains(&format!("{first_field} (String) = P,1 \"east\"")), "{file}: {text}");
        let text_header = std::fs::read_to_string(&path).unwrap();
        let header = text_header.lines().next().unwrap();
        assert!(header.starts_with(&format!("{first_field},{second_field},")), "{file}: {header}");
    }
}

/// Python's csv module (RFC 4180 dialect) reads every row with as many fields as the header
/// and the awkward id and name unchanged.
#[test]
fn python_csv_reads_every_csv() {
    if !Command::new("python3").arg("-c").arg("import csv").output().is_ok_and(|o| o.status.success()) {
        return skip("python3");
    }
    let d = quoting_links();
    let script = r#"
import csv, json, sys
out = {}
for f in sys.argv[1:]:
    with open(f, newline="") as h:
        rows = list(csv.reader(h))
    out[f.rsplit("/", 1)[-1]] = {"header": rows[0], "widths": sorted({len(r) for r in rows}), "first": rows[1][:2]}
print(json.dumps(out))
"#;
    let out = d.path().join("out");
    let o = Command::new("python3")
        .arg("-c")
        .arg(script)
        .arg(out.join("links.csv"))
        .arg(out.join("install.csv"))
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    for f in ["links.csv", "install.csv"] {
        let t = &v[f];
        let n = t["header"].as_array().unwrap().len();
        assert_eq!(t["widths"], serde_json::json!([n]), "{f}: {t}");
        assert_eq!(t["first"][0], "P,1 \"east\"", "{f}: {t}");
    }
    assert_eq!(v["install.csv"]["first"][1], "Mast, \"old\" yard");
    assert!(v["install.csv"]["header"].as_array().unwrap().iter().any(|h| h == "keepout_m"));
    let side: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("install.json")).unwrap()).unwrap();
    assert!(side["reference_level_w_m2"].as_f64().unwrap() > 0.0);
}

/// GDAL's KML drivers (LIBKML, else KML) open the KML inside the map's KMZ without a warning
/// and find the nodes, the planned links and the layers as ground overlays; the overlays'
/// LatLonBox is the GeoTIFF's extent (OGC KML 2.2, section 11.2).
#[test]
fn ogrinfo_opens_the_kmz() {
    if !have("ogrinfo") {
        return skip("ogrinfo");
    }
    let d = tempfile::tempdir().unwrap();
    demo_map(d.path(), "total,interference,sinr");
    let kmz = d.path().join("site.kmz");
    let inside = format!("/vsizip/{}/doc.kml", kmz.display());
    let o = Command::new("ogrinfo").args(["-ro", "-al", "-so"]).arg(&inside).output().unwrap();
    let text = String::from_utf8_lossy(&o.stdout);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success() && !err.contains("Warning") && !err.contains("ERROR"), "{err}");
    let count = |layer: &str| -> usize {
        let at = text.find(&format!("Layer name: {layer}")).unwrap_or_else(|| panic!("no layer {layer}: {text}"));
        let rest = &text[at..];
        let line = rest.lines().find(|l| l.starts_with("Feature Count:")).unwrap();
        line["Feature Count:".len()..].trim().parse().unwrap()
    };
    assert_eq!(count("Nodes"), 46);
    // The demo plans 14 links (one profile each in `links`), 46 nodes.
    assert_eq!(count("Planned links"), 14);
    // Ground overlays by the document itself: three layers, boxes on the GeoTIFF's extent.
    let mut z = zip::ZipArchive::new(std::fs::File::open(&kmz).unwrap()).unwrap();
    let mut doc = String::new();
    std::io::Read::read_to_string(&mut z.by_name("doc.kml").unwrap(), &mut doc).unwrap();
    assert_eq!(doc.matches("<GroundOverlay>").count(), 3);
    let tag = |t: &str| -> f64 {
        let a = doc.find(&format!("<{t}>")).unwrap() + t.len() + 2;
        doc[a..a + doc[a..].find('<').unwrap()].parse().unwrap()
    };
    if have("gdalinfo") {
        let tif = gdalinfo(&d.path().join("total.tif"));
        let g: Vec<f64> = tif["geoTransform"].as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect();
        let (w, h) = (tif["size"][0].as_f64().unwrap(), tif["size"][1].as_f64().unwrap());
        for (got, want) in
            [(tag("west"), g[0]), (tag("north"), g[3]), (tag("east"), g[0] + w * g[1]), (tag("south"), g[3] + h * g[5])]
        {
            assert!((got - want).abs() < 1e-9, "LatLonBox {got} vs GeoTIFF corner {want}");
        }
    }
    for f in ["files/total.png", "files/interference.png", "files/sinr.png"] {
        assert!(z.by_name(f).is_ok(), "{f} missing from the KMZ");
    }
}

/// The print sheet is one A3 landscape page (ISO 216: 420 × 297 mm = 1190.55 × 841.89 pt)
/// holding the annotated map drawn for print: the screen sheet's picture at 200 pixels per
/// inch or more on the page (common practice for printed maps: 150 to 300), as poppler's
/// pdfinfo and pdfimages read it.
#[test]
fn pdf_sheet_is_one_a3_page() {
    if !have("pdfinfo") {
        return skip("pdfinfo (poppler-utils)");
    }
    let d = tempfile::tempdir().unwrap();
    demo_map(d.path(), "sinr");
    let pdf = d.path().join("sinr-sheet.pdf");
    let o = Command::new("pdfinfo").arg(&pdf).output().unwrap();
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(o.status.success() && o.stderr.is_empty(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(text.contains("Pages:           1"), "{text}");
    assert!(text.contains("1190.55 x 841.89 pts (A3)"), "{text}");
    let img = image::open(d.path().join("sinr-sheet.png")).unwrap();
    let o = Command::new("pdfimages").arg("-list").arg(&pdf).output().unwrap();
    let list = String::from_utf8_lossy(&o.stdout);
    let row = list.lines().nth(2).unwrap_or_else(|| panic!("no image in the PDF: {list}"));
    let f: Vec<&str> = row.split_whitespace().collect();
    let num = |k: usize| f[k].parse::<f64>().unwrap_or_else(|_| panic!("column {k} of {row}"));
    // The same drawing, larger: width and height grow by one factor (each rounded to whole
    // pixels, hence the 2-pixel allowance), and the resolution poppler reports reaches 200.
    let k = num(3) / f64::from(img.width());
    assert!(
        k >= 1.0 && (num(4) - k * f64::from(img.height())).abs() <= 2.0,
        "{row} against {}x{}",
        img.width(),
        img.height()
    );
    assert!(num(12) >= 200.0 && num(13) >= 200.0, "print resolution below 200 ppi: {row}");
}

/// Fixed colour scales: two runs of different layouts colour a value alike; the scenario
/// may set a layer's limits, and a reversed pair is refused naming table and key.
#[test]
fn colour_scales_are_fixed_and_overridable() {
    let d = tempfile::tempdir().unwrap();
    let text = crate::util::demo_scenario();
    let set = format!("{text}\n[colour_scale]\ninterference = [-120, -60]\n");
    let p = d.path().join("set.toml");
    std::fs::write(&p, &set).unwrap();
    let out = d.path().join("o");
    let o =
        run(&["map", p.to_str().unwrap(), "--layers", "interference,sinr", "--out", out.to_str().unwrap(), "--quiet"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let mut z = zip::ZipArchive::new(std::fs::File::open(out.join("site.kmz")).unwrap()).unwrap();
    let mut doc = String::new();
    std::io::Read::read_to_string(&mut z.by_name("doc.kml").unwrap(), &mut doc).unwrap();
    assert!(doc.contains("Interference [dBm], colours from -120 to -60"), "{doc}");
    // The default SINR scale, whatever the layout holds.
    assert!(doc.contains("Mean SINR [dB], colours from -10 to 40"), "{doc}");
    let bad = format!("{text}\n[colour_scale]\nsinr = [30, 10]\n");
    std::fs::write(&p, &bad).unwrap();
    let o = run(&["map", p.to_str().unwrap(), "--out", d.path().join("b").to_str().unwrap(), "--quiet"]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(e.contains("[colour_scale]") && e.contains("sinr") && e.contains("[30, 10]"), "{e}");
    assert!(!d.path().join("b").exists());
}

/// `--quiet` leaves stderr empty in every command that succeeds (common practice for
/// command-line tools: chatter on stderr, data on stdout), while data on stdout stays.
#[test]
fn quiet_silences_stderr_in_every_command() {
    let d = tempfile::tempdir().unwrap();
    let o = |name: &str| d.path().join(name).to_str().unwrap().to_string();
    let drawn = d.path().join("drawn.toml");
    std::fs::write(
        &drawn,
        format!(
            "{}\n[draw]\ndensity_per_km2 = 60\nkeep = 0.8\nhard_core_m = 10\nseed = 3\n",
            crate::util::demo_scenario()
        ),
    )
    .unwrap();
    let demo = "sites/harbourlight/scenario.toml";
    let runs: Vec<(Vec<String>, bool)> = vec![
        (vec!["map".into(), demo.into(), "--layers".into(), "total".into(), "--out".into(), o("m")], false),
        (
            vec![
                "map".into(),
                demo.into(),
                "--layers".into(),
                "total".into(),
                "--tile".into(),
                "0/2".into(),
                "--out".into(),
                o("t"),
            ],
            false,
        ),
        (
            vec![
                "map".into(),
                demo.into(),
                "--layers".into(),
                "total".into(),
                "--tile".into(),
                "1/2".into(),
                "--out".into(),
                o("t"),
            ],
            false,
        ),
        (vec!["merge".into(), o("t"), "--out".into(), o("merged")], false),
        (vec!["links".into(), demo.into(), "--no-maps".into(), "--out".into(), o("l")], false),
        (vec!["probe".into(), demo.into(), "--at".into(), "45.5002,-4.8100".into()], true),
        (vec!["check".into(), demo.into()], false),
        (vec!["draw".into(), drawn.to_str().unwrap().into(), "--out".into(), o("drawn.geojson")], false),
        (vec!["assign".into(), demo.into(), "--out".into(), o("plan.geojson")], true),
        (
            vec!["aggregate".into(), "--density-per-km2".into(), "100".into(), "--realizations".into(), "200".into()],
            true,
        ),
        (vec!["man".into()], true),
    ];
    for (args, prints) in runs {
        let mut a: Vec<&str> = args.iter().map(String::as_str).collect();
        a.push("--quiet");
        let r = run(&a);
        assert!(r.status.success(), "{a:?}: {}", stderr(&r));
        assert!(r.stderr.is_empty(), "{a:?} wrote to stderr with --quiet: {}", stderr(&r));
        if prints {
            assert!(!r.stdout.is_empty(), "{a:?}: --quiet also silenced the data on stdout");
        }
    }
}

/// What a person sees on the terminal when running `lobemap args`: the command run under a
/// pseudo-terminal by util-linux's `script`, its screen (stdout and stderr) with the escape
/// sequences removed.
fn on_terminal(args: &[String]) -> String {
    let bin = std::env::var("LOBEMAP_TEST_BIN").unwrap_or_else(|_| env!("CARGO_BIN_EXE_lobemap").to_string());
    let line: Vec<String> =
        std::iter::once(&bin).chain(args).map(|a| format!("'{}'", a.replace('\'', "'\\''"))).collect();
    let o = Command::new("script")
        .args(["-qec", &line.join(" "), "/dev/null"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap();
    assert!(o.status.success(), "{line:?}: {}", String::from_utf8_lossy(&o.stdout));
    let screen = String::from_utf8_lossy(&o.stdout).replace('\r', "\n");
    let mut plain = String::new();
    let mut chars = screen.chars();
    while let Some(c) = chars.next() {
        if c == '\u{1b}' {
            // CSI: ESC [ parameters, then one final letter.
            for d in chars.by_ref() {
                if d.is_ascii_alphabetic() {
                    break;
                }
            }
        } else {
            plain.push(c);
        }
    }
    plain
}

/// On a terminal every step that can take more than a second draws a progress bar on stderr
/// (common practice for command-line tools), each named for its step; `--quiet` draws none.
/// The steps here are sized to be short in CI; a bar is drawn from its first step.
#[test]
fn long_steps_draw_progress_bars_on_a_terminal() {
    if !have("script") {
        return skip("script (util-linux)");
    }
    let d = tempfile::tempdir().unwrap();
    let o = |name: &str| d.path().join(name).to_str().unwrap().to_string();
    let drawn = d.path().join("drawn.toml");
    let draw = "\n[draw]\ndensity_per_km2 = 60\nkeep = 0.8\nhard_core_m = 10\nseed = 3\n";
    std::fs::write(&drawn, format!("{}{draw}", crate::util::demo_scenario())).unwrap();
    let demo = "sites/harbourlight/scenario.toml".to_string();
    let s = |v: &[&str]| v.iter().map(|x| x.to_string()).collect::<Vec<String>>();
    let cases: Vec<(Vec<String>, &str)> = vec![
        (s(&["aggregate", "--density-per-km2", "300", "--realizations", "300000"]), "Monte Carlo ["),
        (s(&["probe", &demo, "--at", "45.5002,-4.8100", "--monte-carlo", "200000"]), "Monte Carlo ["),
        (s(&["links", &demo, "--no-maps", "--monte-carlo", "5000", "--out", &o("l")]), "links ["),
        (s(&["assign", &demo, "--out", &o("plan.geojson")]), "plan search ["),
        (
            s(&["map", drawn.to_str().unwrap(), "--layers", "total", "--realizations", "3", "--out", &o("e")]),
            "drawn layouts [",
        ),
        (s(&["map", &demo, "--layers", "total", "--out", &o("m")]), "writing ["),
    ];
    for (mut args, label) in cases {
        let seen = on_terminal(&args);
        assert!(seen.contains(label), "{args:?}: no '{label}' bar on the terminal:\n{seen}");
        args.push("--quiet".into());
        let seen = on_terminal(&args);
        assert!(!seen.contains(label), "{args:?}: a bar under --quiet:\n{seen}");
    }
}

/// `[context] layers`: the user's lines are drawn beneath the sheet (the sheet changes where
/// the line runs, the GeoTIFF does not), the file joins the input hashes, and a Point feature
/// or a swapped coordinate is refused naming the file, the feature and the field.
#[test]
fn context_layers_are_drawn_and_checked() {
    let d = tempfile::tempdir().unwrap();
    // The demo without its own context (its last table), to add one.
    let demo = crate::util::demo_scenario();
    let text = demo.split("\n[context]").next().unwrap();
    let line = r#"{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"name":"Quay Road"},"geometry":{"type":"LineString","coordinates":[[-4.8150,45.4990],[-4.7850,45.5030]]}}]}"#;
    std::fs::write(d.path().join("streets.geojson"), line).unwrap();
    let with = d.path().join("with.toml");
    std::fs::write(&with, format!("{text}\n[context]\nlayers = [\"streets.geojson\"]\n")).unwrap();
    let plain = d.path().join("plain.toml");
    std::fs::write(&plain, text).unwrap();
    for (p, out) in [(&with, "a"), (&plain, "b")] {
        let o = run(&[
            "map",
            p.to_str().unwrap(),
            "--layers",
            "total",
            "--out",
            d.path().join(out).to_str().unwrap(),
            "--quiet",
        ]);
        assert!(o.status.success(), "{}", stderr(&o));
    }
    let read = |f: &str| std::fs::read(d.path().join(f)).unwrap();
    assert_ne!(read("a/total-sheet.png"), read("b/total-sheet.png"), "the context line was not drawn");
    assert_eq!(read("a/total.tif"), read("b/total.tif"), "context must not change the computation");
    for (bad, field) in [
        (
            r#"{"type":"FeatureCollection","features":[{"type":"Feature","properties":{},"geometry":{"type":"Point","coordinates":[-4.8,45.5]}}]}"#,
            "geometry",
        ),
        (
            r#"{"type":"FeatureCollection","features":[{"type":"Feature","properties":{},"geometry":{"type":"LineString","coordinates":[[45.5,-4.8],[45.5,-94.8]]}}]}"#,
            "coordinates",
        ),
    ] {
        std::fs::write(d.path().join("streets.geojson"), bad).unwrap();
        let o = run(&["check", with.to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(2));
        let e = stderr(&o);
        assert!(e.contains("streets.geojson") && e.contains("feature 0") && e.contains(field), "{e}");
    }
}

/// Every planned link over the demo's surface gets its profile as SVG and as PNG. GDAL's PNG
/// driver (gdalinfo) reads each PNG as 900 × 360 RGB, and the pixels (decoded by the `image`
/// crate) hold the drawing: the ray's blue and the ground's brown (`io/profile.rs` colours).
#[test]
fn link_profiles_come_as_svg_and_png() {
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("l");
    let o = run(&["links", "sites/harbourlight/scenario.toml", "--out", out.to_str().unwrap(), "--no-maps", "--quiet"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let mut stems: Vec<String> = std::fs::read_dir(&out)
        .unwrap()
        .filter_map(|e| e.unwrap().file_name().into_string().ok())
        .filter_map(|n| n.strip_suffix(".svg").filter(|s| s.starts_with("profile-")).map(String::from))
        .collect();
    stems.sort();
    // The demo plans 14 links.
    assert_eq!(stems.len(), 14, "{stems:?}");
    for stem in &stems {
        let png = out.join(format!("{stem}.png"));
        let img = image::open(&png).unwrap_or_else(|e| panic!("{stem}.png: {e}")).to_rgb8();
        assert_eq!(img.dimensions(), (900, 360));
        let has = |rgb: [u8; 3]| img.pixels().filter(|p| p.0 == rgb).count();
        assert!(has([24, 86, 140]) > 200, "{stem}: no ray drawn");
        // The ground is drawn at 90 % over white: red well above blue.
        assert!(img.pixels().filter(|p| p.0[0] as i32 > p.0[2] as i32 + 40).count() > 1000, "{stem}: no ground drawn");
    }
    if have("gdalinfo") {
        for stem in &stems {
            let g = gdalinfo(&out.join(format!("{stem}.png")));
            assert_eq!(g["driverShortName"], "PNG");
            assert_eq!((g["size"][0].as_u64(), g["size"][1].as_u64()), (Some(900), Some(360)));
            assert_eq!(g["bands"].as_array().unwrap().len(), 3);
        }
    } else {
        skip("gdalinfo");
    }
}
