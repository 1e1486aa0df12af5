//! GeoTIFF layers in the Cloud-Optimised GeoTIFF layout, georeferenced in EPSG:4326.
//!
//! The file is written by the `geotiff-writer` crate: 256 × 256 tiles, DEFLATE with the
//! floating-point predictor (TIFF Technical Note 3) for float32 layers and the horizontal
//! predictor for integer layers, overviews by halving (nearest neighbour, the only honest
//! choice for dB values and node indices) until the smallest fits in one tile, and GDAL's
//! structural-metadata header, so `gdalinfo` reports `LAYOUT=COG`. Georeferencing:
//! ModelPixelScale, ModelTiepoint and a GeoKeyDirectory with GTModelType 2 (geographic),
//! GTRasterType 1 (PixelIsArea), GeographicType 4326; nodata in GDAL_NODATA.
//!
//! What the layer is (its description and unit) and, for index layers, the name of each
//! index go to a GDAL PAM sidecar `<layer>.tif.aux.xml` beside the GeoTIFF, which GDAL reads
//! as the band's description, unit type and category names.
//!
//! # References
//! - GeoTIFF Format Specification 1.0 (Ritter and Ruth, 2000), OGC GeoTIFF 1.1 (2019).
//! - GDAL COG driver and GTiff driver documentation (<https://gdal.org/drivers/raster/cog.html>),
//!   PAM `.aux.xml` files (<https://gdal.org/user/raster_data_model.html>).

use crate::NODATA;
use crate::geometry::grid::Grid;
use crate::io::report::esc;
use geotiff_writer::{CogBuilder, Compression, GeoTiffBuilder, Predictor};
use ndarray::ArrayView2;
use std::fmt::Write as _;
use std::io::{Seek, Write};

/// Side of the square tiles, pixels.
pub const TILE: u32 = 256;

/// Overview levels for a `cols` × `rows` raster: 2, 4, 8, ... until the overview fits in
/// one tile (none when the raster already does).
pub fn overview_levels(cols: usize, rows: usize) -> Vec<u32> {
    let mut levels = Vec::new();
    let mut level = 1u32;
    while cols.max(rows).div_ceil(level as usize) > TILE as usize {
        level *= 2;
        levels.push(level);
    }
    levels
}

fn builder(grid: &Grid) -> GeoTiffBuilder {
    let b = grid.bbox();
    GeoTiffBuilder::new(grid.cols() as u32, grid.rows() as u32)
        .epsg(4326)
        .pixel_scale(grid.dlon(), grid.dlat())
        .origin(b.west, b.north)
        .nodata(&format!("{NODATA}"))
        .compression(Compression::Deflate)
        .tile_size(TILE, TILE)
}

/// Writes one float32 layer (row-major, north row first) as a Cloud-Optimised GeoTIFF.
pub fn write_geotiff<W: Write + Seek>(w: W, grid: &Grid, data: &[f32]) -> Result<(), String> {
    let view = ArrayView2::from_shape((grid.rows(), grid.cols()), data).map_err(|e| e.to_string())?;
    CogBuilder::new(builder(grid).predictor(Predictor::FloatingPoint))
        .overview_levels(overview_levels(grid.cols(), grid.rows()))
        .write_2d_to(w, view)
        .map_err(|e| e.to_string())
}

/// Writes an index layer (whole numbers stored as f32, [`NODATA`] where undefined) as an
/// Int32 Cloud-Optimised GeoTIFF. Every value must be a whole number that fits in an i32.
pub fn write_index_geotiff<W: Write + Seek>(w: W, grid: &Grid, data: &[f32]) -> Result<(), String> {
    let ints: Vec<i32> = data
        .iter()
        .map(|&v| if v.fract() == 0.0 && v.abs() < 2.0e9 { Ok(v as i32) } else { Err(format!("{v} is not an index")) })
        .collect::<Result<_, _>>()?;
    let view = ArrayView2::from_shape((grid.rows(), grid.cols()), &ints[..]).map_err(|e| e.to_string())?;
    CogBuilder::new(builder(grid).predictor(Predictor::Horizontal))
        .overview_levels(overview_levels(grid.cols(), grid.rows()))
        .write_2d_to(w, view)
        .map_err(|e| e.to_string())
}

/// The GDAL PAM sidecar (`.aux.xml`) of a one-band raster: its description, unit and, for
/// an index layer, the name of each index from 0 (GDAL's category names).
pub fn pam_sidecar(description: &str, unit: &str, categories: Option<&[String]>) -> String {
    let mut x = String::from("<PAMDataset>\n  <PAMRasterBand band=\"1\">\n");
    let _ = writeln!(x, "    <Description>{}</Description>", esc(description));
    if !unit.is_empty() {
        let _ = writeln!(x, "    <UnitType>{}</UnitType>", esc(unit));
    }
    if let Some(names) = categories {
        x += "    <CategoryNames>\n";
        for n in names {
            let _ = writeln!(x, "      <Category>{}</Category>", esc(n));
        }
        x += "    </CategoryNames>\n";
    }
    x += "  </PAMRasterBand>\n</PAMDataset>\n";
    x
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The levels GDAL's COG driver would build for 256-pixel tiles: halve until the largest
    /// side fits in one tile (GDAL COG driver documentation, OVERVIEWS=AUTO).
    #[test]
    fn overviews_stop_at_one_tile() {
        assert!(overview_levels(256, 100).is_empty());
        assert_eq!(overview_levels(257, 10), vec![2]);
        assert_eq!(overview_levels(700, 600), vec![2, 4]);
        assert_eq!(overview_levels(4096, 10), vec![2, 4, 8, 16]);
    }

    #[test]
    fn sidecar_escapes_names() {
        let x = pam_sidecar("server", "", Some(&["A&B".to_string(), "<n>".to_string()]));
        assert!(x.contains("<Category>A&amp;B</Category>") && x.contains("<Category>&lt;n&gt;</Category>"));
        assert!(!x.contains("UnitType"));
    }
}
