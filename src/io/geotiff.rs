//! Float32 GeoTIFF writer, georeferenced in EPSG:4326.
//!
//! Tags: ModelPixelScale (33550), ModelTiepoint (33922), GeoKeyDirectory (34735) with
//! GTModelType = 2 (geographic), GTRasterType = 1 (PixelIsArea), GeographicType = 4326 and
//! angular unit degree (9102), and GDAL_NODATA (42113).
//!
//! # References
//! - GeoTIFF Format Specification 1.0 (Ritter and Ruth, 2000), OGC GeoTIFF 1.1 (2019).

use crate::NODATA;
use crate::geometry::grid::Grid;
use std::io::{Seek, Write};
use tiff::encoder::{TiffEncoder, colortype::Gray32Float};
use tiff::tags::Tag;

/// The GeoKeyDirectory for EPSG:4326 with PixelIsArea.
pub const GEOKEYS_4326: [u16; 20] = [1, 1, 0, 4, 1024, 0, 1, 2, 1025, 0, 1, 1, 2048, 0, 1, 4326, 2054, 0, 1, 9102];

/// Writes one layer (row-major, north row first) as a georeferenced float32 GeoTIFF.
pub fn write_geotiff<W: Write + Seek>(w: W, grid: &Grid, data: &[f32]) -> tiff::TiffResult<()> {
    let mut enc = TiffEncoder::new(w)?;
    let mut img = enc.new_image::<Gray32Float>(grid.cols() as u32, grid.rows() as u32)?;
    let b = grid.bbox();
    img.encoder().write_tag(Tag::ModelPixelScaleTag, &[grid.dlon(), grid.dlat(), 0.0][..])?;
    img.encoder().write_tag(Tag::ModelTiepointTag, &[0.0, 0.0, 0.0, b.west, b.north, 0.0][..])?;
    img.encoder().write_tag(Tag::GeoKeyDirectoryTag, &GEOKEYS_4326[..])?;
    img.encoder().write_tag(Tag::GdalNodata, format!("{NODATA}").as_str())?;
    img.write_data(data)
}
