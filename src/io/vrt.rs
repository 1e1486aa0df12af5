//! GDAL virtual rasters (VRT XML) that join the GeoTIFFs of a tiled map's row blocks into
//! one raster without copying pixels (GDAL's VRT format, <https://gdal.org/drivers/raster/vrt.html>).

use crate::NODATA;
use crate::geometry::grid::Grid;
use std::fmt::Write;
use std::path::PathBuf;

/// WGS 84 geographic coordinates, the CRS of every lobemap raster (EPSG:4326).
const WGS84_WKT: &str = r#"GEOGCS["WGS 84",DATUM["WGS_1984",SPHEROID["WGS 84",6378137,298.257223563,AUTHORITY["EPSG","7030"]],AUTHORITY["EPSG","6326"]],PRIMEM["Greenwich",0,AUTHORITY["EPSG","8901"]],UNIT["degree",0.0174532925199433,AUTHORITY["EPSG","9122"]],AXIS["Latitude",NORTH],AXIS["Longitude",EAST],AUTHORITY["EPSG","4326"]]"#;

/// One source of a VRT: a float32 GeoTIFF holding rows `first_row..first_row + rows` of the
/// whole grid, all of its columns.
pub(crate) struct Source {
    pub(crate) path: PathBuf,
    pub(crate) first_row: usize,
    pub(crate) rows: usize,
}

/// The GDAL PAM sidecar (`.aux.xml`) that gives a world-file raster (the map-only PNGs) its
/// CRS, EPSG:4326 with longitude first as the world file has it.
pub(crate) fn srs_sidecar() -> String {
    format!("<PAMDataset>\n  <SRS dataAxisToSRSAxisMapping=\"2,1\">{}</SRS>\n</PAMDataset>\n", escape(WGS84_WKT))
}

fn escape(s: &str) -> String {
    s.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;").replace('"', "&quot;")
}

/// The VRT of one layer over `grid` from its row blocks (absolute paths, so the VRT may be
/// moved but the tiles may not).
pub(crate) fn vrt(grid: &Grid, description: &str, sources: &[Source]) -> String {
    let b = grid.bbox();
    let cols = grid.cols();
    let mut x = String::new();
    let _ = writeln!(x, r#"<VRTDataset rasterXSize="{cols}" rasterYSize="{}">"#, grid.rows());
    let _ = writeln!(x, r#"  <SRS dataAxisToSRSAxisMapping="2,1">{}</SRS>"#, escape(WGS84_WKT));
    let _ =
        writeln!(x, "  <GeoTransform>{}, {}, 0, {}, 0, {}</GeoTransform>", b.west, grid.dlon(), b.north, -grid.dlat());
    let _ = writeln!(x, r#"  <VRTRasterBand dataType="Float32" band="1">"#);
    let _ = writeln!(x, "    <Description>{}</Description>", escape(description));
    let _ = writeln!(x, "    <NoDataValue>{NODATA}</NoDataValue>");
    for s in sources {
        let _ = writeln!(x, "    <SimpleSource>");
        let _ = writeln!(
            x,
            r#"      <SourceFilename relativeToVRT="0">{}</SourceFilename>"#,
            escape(&s.path.display().to_string())
        );
        let _ = writeln!(x, "      <SourceBand>1</SourceBand>");
        let _ = writeln!(x, r#"      <SrcRect xOff="0" yOff="0" xSize="{cols}" ySize="{}"/>"#, s.rows);
        let _ = writeln!(x, r#"      <DstRect xOff="0" yOff="{}" xSize="{cols}" ySize="{}"/>"#, s.first_row, s.rows);
        let _ = writeln!(x, "    </SimpleSource>");
    }
    let _ = writeln!(x, "  </VRTRasterBand>");
    let _ = writeln!(x, "</VRTDataset>");
    x
}
