//! The writer list: every raster layer the map writes goes through each writer in
//! [`WRITERS`]. A new output format is one type implementing [`LayerWriter`] and one line in
//! the list.

use crate::error::Error;
use crate::geometry::grid::Grid;
use crate::io::heatmap::{MapSpec, Marker, render_map_only, render_rgb, render_rgb_at};
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
    /// For an index layer (server, channel): the name of each index from 0, written as an
    /// Int32 raster with these category names.
    pub(crate) categories: Option<Vec<String>>,
    /// Colour limits of the pictures.
    pub(crate) range: (f32, f32),
}

/// What every layer shares: the grid and the markers drawn on pictures.
pub(crate) struct Context<'a> {
    pub(crate) grid: &'a Grid,
    pub(crate) markers: &'a [Marker],
    pub(crate) links: &'a [(usize, usize)],
    pub(crate) footprints: &'a [Vec<(f64, f64)>],
    /// The title block's lines under the layer's title ([`crate::io::heatmap::sheet_facts`]).
    pub(crate) facts: &'a [String],
    /// The user's context lines (`[context] layers`).
    pub(crate) context: &'a [Vec<(f64, f64)>],
}

/// Writes one layer in one format; returns the file names written.
pub(crate) trait LayerWriter: Sync {
    fn write(&self, st: &Staging, cx: &Context, layer: &LayerOut) -> Result<Vec<String>, Error>;
    /// Endings of every file name this writer can write for a layer (`tif` for `total.tif`;
    /// one starting with `-` follows the stem directly: `-sheet.png` for `total-sheet.png`).
    fn extensions(&self) -> &'static [&'static str];
}

/// Cloud-Optimised GeoTIFF of every layer (float32, or Int32 for index layers) with its
/// GDAL PAM sidecar (description, unit, category names).
pub(crate) struct GeoTiff;
impl LayerWriter for GeoTiff {
    fn write(&self, st: &Staging, cx: &Context, layer: &LayerOut) -> Result<Vec<String>, Error> {
        use crate::io::geotiff::{pam_sidecar, write_geotiff, write_index_geotiff};
        let name = format!("{}.tif", layer.name);
        st.write_with(&name, |w| {
            match layer.categories {
                None => write_geotiff(w, cx.grid, layer.data),
                Some(_) => write_index_geotiff(w, cx.grid, layer.data),
            }
            .map_err(std::io::Error::other)
        })?;
        let aux = format!("{name}.aux.xml");
        let description = format!("{}: {}", layer.name, layer.title);
        st.write(&aux, pam_sidecar(&description, layer.unit, layer.categories.as_deref()).as_bytes())?;
        Ok(vec![name, aux])
    }
    fn extensions(&self) -> &'static [&'static str] {
        &["tif", "tif.aux.xml"]
    }
}

/// The georeferenced picture of a layer alone for a GIS: one RGBA pixel per cell,
/// transparent where undefined, its world file and its CRS in a GDAL PAM sidecar, covering
/// exactly the grid (the GeoTIFF's extent).
pub(crate) struct MapPicture;
impl LayerWriter for MapPicture {
    fn write(&self, st: &Staging, cx: &Context, layer: &LayerOut) -> Result<Vec<String>, Error> {
        if !layer.picture {
            return Ok(Vec::new());
        }
        let r = render_map_only(cx.grid, layer.data, layer.unit, layer.range)
            .map_err(|e| Error::Output { path: st.dir().join(layer.name), source: std::io::Error::other(e) })?;
        let (png, pgw, aux) =
            (format!("{}.png", layer.name), format!("{}.pgw", layer.name), format!("{}.png.aux.xml", layer.name));
        st.write(&png, &r.png)?;
        st.write(&pgw, r.world.as_bytes())?;
        st.write(&aux, crate::io::vrt::srs_sidecar().as_bytes())?;
        Ok(vec![png, pgw, aux])
    }
    fn extensions(&self) -> &'static [&'static str] {
        &["png", "pgw", "png.aux.xml"]
    }
}

/// The annotated picture of a layer for people: colour bar, symbol legend, title block,
/// graticule, scale bar, north arrow, labelled nodes, links and outlines (not
/// georeferenced), as a PNG and as a one-page A3 landscape PDF for printing.
pub(crate) struct Sheet;
impl LayerWriter for Sheet {
    fn write(&self, st: &Staging, cx: &Context, layer: &LayerOut) -> Result<Vec<String>, Error> {
        if !layer.picture {
            return Ok(Vec::new());
        }
        let spec = MapSpec {
            grid: cx.grid,
            data: layer.data,
            title: &layer.title,
            unit: layer.unit,
            markers: cx.markers,
            links: cx.links,
            outlines: &layer.outlines,
            footprints: cx.footprints,
            range: layer.range,
            facts: cx.facts,
            context: cx.context,
        };
        let at = st.dir().join(layer.name);
        let failed = |e: String| Error::Output { path: at.clone(), source: std::io::Error::other(e) };
        let (name, pdf) = (format!("{}-sheet.png", layer.name), format!("{}-sheet.pdf", layer.name));
        let (w, h) = {
            let (w, h, rgb) = render_rgb(&spec).map_err(failed)?;
            st.write(&name, &crate::io::heatmap::rgb_png(w, h, &rgb).map_err(failed)?)?;
            (w, h)
        };
        // The print sheet: the same drawing redone at the print resolution (the screen
        // picture is dropped first, so only one is held at a time).
        let (pw, ph, print) = render_rgb_at(&spec, crate::io::pdf::print_scale(w, h)).map_err(failed)?;
        st.write(&pdf, &crate::io::pdf::sheet_pdf(pw, ph, &print, &layer.title))?;
        Ok(vec![name, pdf])
    }
    fn extensions(&self) -> &'static [&'static str] {
        &["-sheet.png", "-sheet.pdf"]
    }
}

/// Every layer goes through these, in this order.
pub(crate) const WRITERS: &[&dyn LayerWriter] = &[&GeoTiff, &MapPicture, &Sheet];

/// Writes `layer` through every writer; returns the file names written.
pub(crate) fn write_layer(st: &Staging, cx: &Context, layer: &LayerOut) -> Result<Vec<String>, Error> {
    let mut files = Vec::new();
    for w in WRITERS {
        files.extend(w.write(st, cx, layer)?);
    }
    Ok(files)
}

/// Every file name a layer called `stem` can have, over all writers.
pub(crate) fn layer_file_names(stem: &str) -> impl Iterator<Item = String> + '_ {
    WRITERS.iter().flat_map(move |w| {
        w.extensions()
            .iter()
            .map(move |e| if e.starts_with('-') { format!("{stem}{e}") } else { format!("{stem}.{e}") })
    })
}
