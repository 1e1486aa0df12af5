//! The writer list: every raster layer the map writes goes through each writer in
//! [`WRITERS`]. A new output format is one type implementing [`LayerWriter`] and one line in
//! the list.

use crate::error::Error;
use crate::geometry::grid::Grid;
use crate::io::heatmap::{MapSpec, Marker, render};
use crate::io::staging::Staging;

/// One layer ready to write.
pub(crate) struct LayerOut<'a> {
    /// File stem, e.g. `interference`.
    pub(crate) name: &'static str,
    /// Title on pictures.
    pub(crate) title: String,
    /// Unit on pictures (`dBm`, `dB`, [`crate::io::heatmap::PROBABILITY`]).
    pub(crate) unit: &'static str,
    /// Values, row-major, north row first.
    pub(crate) data: &'a [f32],
    /// Rings (lon, lat) to outline on pictures.
    pub(crate) outlines: Vec<Vec<(f64, f64)>>,
    /// Whether the layer has a colour scale (the server index has none).
    pub(crate) picture: bool,
}

/// What every layer shares: the grid and the markers drawn on pictures.
pub(crate) struct Context<'a> {
    pub(crate) grid: &'a Grid,
    pub(crate) markers: &'a [Marker],
    pub(crate) links: &'a [(usize, usize)],
    pub(crate) footprints: &'a [Vec<(f64, f64)>],
}

/// Writes one layer in one format; returns the file names written.
pub(crate) trait LayerWriter: Sync {
    fn write(&self, st: &mut Staging, cx: &Context, layer: &LayerOut) -> Result<Vec<String>, Error>;
    /// Endings of every file name this writer can write for a layer (`tif` for `total.tif`).
    fn extensions(&self) -> &'static [&'static str];
}

/// Float32 GeoTIFF of every layer.
pub(crate) struct GeoTiff;
impl LayerWriter for GeoTiff {
    fn write(&self, st: &mut Staging, cx: &Context, layer: &LayerOut) -> Result<Vec<String>, Error> {
        let name = format!("{}.tif", layer.name);
        st.write_with(&name, |w| {
            crate::io::geotiff::write_geotiff(w, cx.grid, layer.data).map_err(std::io::Error::other)
        })?;
        Ok(vec![name])
    }
    fn extensions(&self) -> &'static [&'static str] {
        &["tif"]
    }
}

/// PNG heatmap with its world file, for layers with a colour scale.
pub(crate) struct Heatmap;
impl LayerWriter for Heatmap {
    fn write(&self, st: &mut Staging, cx: &Context, layer: &LayerOut) -> Result<Vec<String>, Error> {
        if !layer.picture {
            return Ok(Vec::new());
        }
        let r = render(&MapSpec {
            grid: cx.grid,
            data: layer.data,
            title: &layer.title,
            unit: layer.unit,
            markers: cx.markers,
            links: cx.links,
            outlines: &layer.outlines,
            footprints: cx.footprints,
        })
        .map_err(|e| Error::Output { path: st.dir().join(layer.name), source: std::io::Error::other(e) })?;
        let (png, pgw) = (format!("{}.png", layer.name), format!("{}.pgw", layer.name));
        st.write(&png, &r.png)?;
        st.write(&pgw, r.world.as_bytes())?;
        Ok(vec![png, pgw])
    }
    fn extensions(&self) -> &'static [&'static str] {
        &["png", "pgw"]
    }
}

/// Every layer goes through these, in this order.
pub(crate) const WRITERS: &[&dyn LayerWriter] = &[&GeoTiff, &Heatmap];

/// Writes `layer` through every writer; returns the file names written.
pub(crate) fn write_layer(st: &mut Staging, cx: &Context, layer: &LayerOut) -> Result<Vec<String>, Error> {
    let mut files = Vec::new();
    for w in WRITERS {
        files.extend(w.write(st, cx, layer)?);
    }
    Ok(files)
}

/// Every file name a layer called `stem` can have, over all writers.
pub(crate) fn layer_file_names(stem: &str) -> impl Iterator<Item = String> + '_ {
    WRITERS.iter().flat_map(move |w| w.extensions().iter().map(move |e| format!("{stem}.{e}")))
}
