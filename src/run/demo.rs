//! The bundled demo, "Harbourlight Quay" (an invented 60 GHz waterfront mesh): where its
//! scenario is, and the random-field sweep it runs beside the map and the link check.

use crate::config::field::FieldOverrides;
use crate::error::{Error, Problem};
use crate::run::aggregate::AggregateOptions;
use std::path::{Path, PathBuf};

/// `sites/harbourlight/scenario.toml` under the current folder, or under the source tree the
/// library was built from.
pub fn scenario_path() -> Result<PathBuf, Error> {
    let rel = Path::new("sites/harbourlight/scenario.toml");
    for base in [PathBuf::from("."), PathBuf::from(env!("CARGO_MANIFEST_DIR"))] {
        let p = base.join(rel);
        if p.exists() {
            return Ok(p);
        }
    }
    Err(Error::input(Problem::flag("demo", format!("cannot find {}; run from the repository folder", rel.display()))))
}

/// The demo's random field: the site's radio values and its lamp-post sector (15/−5 dBi,
/// 16 dBm) in a dense field of access nodes (400 per km² on 15–1500 m), Rician K = 6 dB:
/// how the beamwidth shapes the aggregate at a receiver with the site's aimed antenna.
pub fn field_overrides() -> FieldOverrides {
    FieldOverrides {
        density_per_km2: Some(400.0),
        guard_m: 15.0,
        radius_m: 1500.0,
        gain_dbi: Some(15.0),
        sidelobe_dbi: Some(-5.0),
        power_dbm: Some(16.0),
        fading: Some("rician".into()),
        k_db: 6.0,
        m: 2.0,
        ..FieldOverrides::default()
    }
}

/// Where the demo's sweep goes: beside the map folder (`<out>-aggregate`), not inside it, so
/// the map folder holds files only and is swapped whole on each run.
pub fn aggregate_dir(out: &Path) -> std::path::PathBuf {
    match out.file_name().and_then(|n| n.to_str()) {
        Some(n) => out.with_file_name(format!("{n}-aggregate")),
        _ => out.join("aggregate"),
    }
}

/// The demo's sweep (beamwidth 10°, 30°, 90°), 4000 seeded realisations, P(I > −55 dBm),
/// written into `out`.
pub fn aggregate_options(out: &Path) -> AggregateOptions {
    AggregateOptions {
        sweep: Some("beamwidth_deg=10,30,90".into()),
        thresholds_dbm: vec![-55.0],
        realizations: 4000,
        seed: 7,
        max_density: false,
        min_guard: false,
        budget_dbm: None,
        outage: 0.01,
        out: Some(out.to_path_buf()),
        inputs: Vec::new(),
    }
}
