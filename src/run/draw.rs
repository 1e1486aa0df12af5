//! The `draw` command: one random layout from the scenario's `[draw]` table, written as the
//! layout GeoJSON the map would use.

use crate::error::{Error, Problem};
use crate::io::layout::layout_geojson;
use crate::io::staging::Staging;
use crate::model::node::Node;
use crate::model::scenario::Scenario;
use std::path::{Path, PathBuf};

/// What a `draw` run produced.
pub struct DrawResult {
    /// The layout written (fixed plus drawn nodes, or drawn only).
    pub nodes: Vec<Node>,
    /// How many nodes were drawn.
    pub drawn: usize,
    /// The file written.
    pub files: Vec<PathBuf>,
}

/// Draws with `seed` (default: the `[draw]` table's) and writes the layout to `out`.
pub fn run_draw(sc: &Scenario, out: &Path, seed: Option<u64>) -> Result<DrawResult, Error> {
    let spec = sc.draw.as_ref().ok_or_else(|| {
        Error::input(Problem::new(
            sc.path.display().to_string(),
            None,
            "draw",
            "missing: add a [draw] table (density_per_km2, ...)",
        ))
    })?;
    let name = out
        .file_name()
        .and_then(|n| n.to_str())
        .ok_or_else(|| Error::input(Problem::flag("--out", "needs a file name")))?;
    let dir = out.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let nodes = crate::random::layout::layout(sc, spec, seed.unwrap_or(spec.seed));
    let drawn = nodes.iter().filter(|n| n.id.starts_with("draw-")).count();
    let st = Staging::shared(dir, &sc.input_files())?;
    st.write(name, layout_geojson(&nodes).to_string().as_bytes())?;
    let files = st.commit()?;
    Ok(DrawResult { nodes, drawn, files })
}
