//! lobemap: aggregate interference, SINR and coverage maps for directional wireless nodes.
//!
//! Data flows one way: a scenario file and its node layout are parsed and validated
//! ([`config`]) into a [`model::scenario::Scenario`]; the [`engine`] computes raster layers on
//! a [`geometry::grid::Grid`]; [`jobs`] compute link tables, probes and the installer sheet
//! with the one double-precision link budget ([`model::link`]); [`random`] characterises
//! random fields; the commands in [`run`] stage and write everything. The physics lives in
//! small value types, one law or pattern per file: [`model::pathloss`], [`model::antenna`],
//! [`model::fading`], [`model::noise`].
//!
//! # Example
//! Two 28 GHz sector nodes on invented poles 227 m apart, facing each other: the scenario
//! built from the same TOML keys as a scenario file, every layer computed in memory, and the
//! cell in the middle of the grid checked against the double-precision probe (the engine's
//! float32 layers agree with the f64 link budget within 0.01 dB on every pattern the tests
//! cover; 0.05 dB leaves room for the cell's f32 position).
//! ```
//! use lobemap::engine::{Engine, LayerSet, Options};
//! use lobemap::model::scenario::Scenario;
//! # fn main() -> Result<(), Box<dyn std::error::Error>> {
//! let dir = tempfile::tempdir()?;
//! std::fs::write(
//!     dir.path().join("nodes.geojson"),
//!     r#"{"type": "FeatureCollection", "features": [
//!   {"type": "Feature", "geometry": {"type": "Point", "coordinates": [11.2000, 47.3000]},
//!    "properties": {"id": "A", "azimuth_deg": 90, "peer": "B"}},
//!   {"type": "Feature", "geometry": {"type": "Point", "coordinates": [11.2030, 47.3000]},
//!    "properties": {"id": "B", "azimuth_deg": 270, "peer": "A"}}]}"#,
//! )?;
//! let toml = r#"
//! name = "two-poles"
//! nodes = "nodes.geojson"
//! [radio]
//! frequency_ghz = 28
//! bandwidth_mhz = 400
//! noise_figure_db = 7
//! [propagation]
//! model = "free-space"
//! [antenna]
//! pattern = "sector"
//! beamwidth_deg = 65
//! gain_dbi = 18
//! sidelobe_dbi = -2
//! power_dbm = 20
//! [grid]
//! cell_m = 10
//! margin_m = 50
//! "#;
//! let sc = Scenario::from_toml(toml, &dir.path().join("scenario.toml"))?;
//! let layers = Engine::new(&sc).run(&Options { layers: LayerSet::ALL, cutoff_m: None, progress: false });
//! let (grid, total) = (sc.grid(), layers.total.as_ref().expect("asked for"));
//! let (r, c) = (grid.rows() / 2, grid.cols() / 2);
//! let p = lobemap::jobs::probe::probe(&sc, grid.lat_of_row(r), grid.lon_of_col(c));
//! assert!((f64::from(total[r * grid.cols() + c]) - p.total_dbm).abs() < 0.05);
//!
//! // The planned link A -> B closes by Friis' transmission formula (free space, both
//! // antennas on boresight): 20 dBm + 18 dBi + 18 dBi − 20 log10(4π d f / c).
//! let rows = lobemap::jobs::links::links(&sc, None);
//! let ab = rows.iter().find(|l| l.from == "A").expect("A has a peer");
//! let fspl_db = 20.0 * (4.0 * std::f64::consts::PI * ab.length_m * 28e9 / 299_792_458.0).log10();
//! assert!((ab.signal_dbm - (20.0 + 18.0 + 18.0 - fspl_db)).abs() < 0.01);
//! # Ok(()) }
//! ```
#![deny(missing_docs)]

pub mod config;
pub mod engine;
pub mod error;
pub mod geometry;
pub mod io;
pub mod jobs;
pub(crate) mod math;
pub mod model;
pub mod progress;
pub mod random;
pub mod run;

pub use error::{Error, Problem};

/// Value written to raster cells where a layer is undefined (GeoTIFF `GDAL_NODATA`).
pub const NODATA: f32 = -9999.0;
