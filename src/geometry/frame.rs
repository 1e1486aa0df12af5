//! Local east-north tangent plane on the WGS84 ellipsoid.
//!
//! Positions are converted to Earth-centred coordinates and rotated into the east-north-up
//! frame of the scenario centre; the east and north components are the plane coordinates in
//! metres. Within 20 km of the centre, plane distances agree with geodesic distances to a few
//! parts per million (checked in tests against geo's geodesic, which follows Karney 2013).
//!
//! # References
//! - C. F. F. Karney, "Algorithms for geodesics", J. Geodesy 87 (2013).
//! - NIMA TR8350.2 (WGS84 parameters a = 6378137 m, f = 1/298.257223563).

/// WGS84 semi-major axis in metres.
pub const WGS84_A: f64 = 6_378_137.0;
/// WGS84 flattening.
pub const WGS84_F: f64 = 1.0 / 298.257_223_563;
const E2: f64 = WGS84_F * (2.0 - WGS84_F);

/// A local east-north plane tangent to the ellipsoid at an origin.
#[derive(Debug, Clone, Copy)]
pub struct LocalFrame {
    lat0: f64,
    lon0: f64,
    sin_lat0: f64,
    cos_lat0: f64,
    x0: f64,
    z0: f64,
}

/// Prime-vertical radius of curvature N(lat) in metres.
pub fn prime_vertical_radius(lat_rad: f64) -> f64 {
    WGS84_A / (1.0 - E2 * lat_rad.sin().powi(2)).sqrt()
}

/// Meridional radius of curvature M(lat) in metres.
pub fn meridional_radius(lat_rad: f64) -> f64 {
    WGS84_A * (1.0 - E2) / (1.0 - E2 * lat_rad.sin().powi(2)).powf(1.5)
}

impl LocalFrame {
    /// The frame tangent at (`lat0_deg`, `lon0_deg`).
    pub fn new(lat0_deg: f64, lon0_deg: f64) -> Self {
        let lat0 = lat0_deg.to_radians();
        let n0 = prime_vertical_radius(lat0);
        LocalFrame {
            lat0: lat0_deg,
            lon0: lon0_deg,
            sin_lat0: lat0.sin(),
            cos_lat0: lat0.cos(),
            x0: n0 * lat0.cos(),
            z0: n0 * (1.0 - E2) * lat0.sin(),
        }
    }

    /// Origin latitude in degrees.
    pub fn lat0(&self) -> f64 {
        self.lat0
    }
    /// Origin longitude in degrees.
    pub fn lon0(&self) -> f64 {
        self.lon0
    }

    /// East and north coordinates in metres of a point given by longitude and latitude.
    pub fn to_local(&self, lon_deg: f64, lat_deg: f64) -> (f64, f64) {
        let lat = lat_deg.to_radians();
        let dlon = (lon_deg - self.lon0).to_radians();
        let (sl, cl) = lat.sin_cos();
        let (sd, cd) = dlon.sin_cos();
        self.from_trig(sl, cl, sd, cd)
    }

    /// East and north coordinates from precomputed sines and cosines of the latitude and of
    /// the longitude difference to the origin (used by the engine to share work along rows
    /// and columns).
    #[inline]
    pub fn from_trig(&self, sin_lat: f64, cos_lat: f64, sin_dlon: f64, cos_dlon: f64) -> (f64, f64) {
        let n = WGS84_A / (1.0 - E2 * sin_lat * sin_lat).sqrt();
        let x = n * cos_lat * cos_dlon;
        let y = n * cos_lat * sin_dlon;
        let z = n * (1.0 - E2) * sin_lat;
        let east = y;
        let north = -self.sin_lat0 * (x - self.x0) + self.cos_lat0 * (z - self.z0);
        (east, north)
    }

    /// The plane bearing (degrees clockwise from the plane's north axis) of true north at a
    /// point: the meridian convergence of the tangent plane there, zero at the origin and
    /// about Δλ·sin φ away from it. A true azimuth α at the point is the plane bearing
    /// α + this value. By a central difference of ±1e-5° of latitude along the meridian.
    pub fn north_deg(&self, lon_deg: f64, lat_deg: f64) -> f64 {
        let (x0, y0) = self.to_local(lon_deg, lat_deg - 1e-5);
        let (x1, y1) = self.to_local(lon_deg, lat_deg + 1e-5);
        (x1 - x0).atan2(y1 - y0).to_degrees()
    }

    /// Longitude and latitude of a plane point, by Newton iteration on [`Self::to_local`]
    /// (converges to below a micrometre in a few steps within tens of kilometres).
    pub fn to_geo(&self, east: f64, north: f64) -> (f64, f64) {
        let lat0 = self.lat0.to_radians();
        let mut lat = self.lat0 + (north / meridional_radius(lat0)).to_degrees();
        let mut lon = self.lon0 + (east / (prime_vertical_radius(lat0) * lat0.cos())).to_degrees();
        for _ in 0..8 {
            let (e, n) = self.to_local(lon, lat);
            let (de, dn) = (east - e, north - n);
            if de.abs() < 1e-7 && dn.abs() < 1e-7 {
                break;
            }
            let latr = lat.to_radians();
            lat += (dn / meridional_radius(latr)).to_degrees();
            lon += (de / (prime_vertical_radius(latr) * latr.cos())).to_degrees();
        }
        (lon, lat)
    }
}

/// True azimuth in [0, 360) from (`lon_a`, `lat_a`) to (`lon_b`, `lat_b`) along the geodesic
/// (Karney 2013, through geo's `Geodesic`), degrees clockwise from true north at the first
/// point.
pub fn geodesic_azimuth_deg(lon_a: f64, lat_a: f64, lon_b: f64, lat_b: f64) -> f64 {
    use geo::{Bearing, Geodesic, Point};
    Geodesic.bearing(Point::new(lon_a, lat_a), Point::new(lon_b, lat_b)).rem_euclid(360.0)
}

/// Bearing in degrees clockwise from north (0..360) of the plane vector (`de`, `dn`).
pub fn bearing_deg(de: f64, dn: f64) -> f64 {
    let b = de.atan2(dn).to_degrees();
    if b < 0.0 { b + 360.0 } else { b }
}

#[cfg(test)]
mod tests {
    use super::*;
    use geo::{Distance, Geodesic, Point};

    // Reference: geo's Geodesic distance (Karney 2013). The issue asks for better than 0.1 %
    // within 20 km; the tangent plane reaches a few ppm, so 1e-4 relative leaves margin.
    #[test]
    fn plane_distance_matches_karney_geodesic_within_20km() {
        for &(lat0, lon0) in &[(0.0, 0.0), (45.0, 7.0), (-33.9, 151.2), (64.1, -21.9)] {
            let f = LocalFrame::new(lat0, lon0);
            let pts = [(0.0, 0.0), (14_000.0, 0.0), (0.0, -14_000.0), (9_000.0, 9_000.0), (-12_000.0, 11_000.0)];
            for a in pts {
                for b in pts {
                    let (lon_a, lat_a) = f.to_geo(a.0, a.1);
                    let (lon_b, lat_b) = f.to_geo(b.0, b.1);
                    let (ea, na) = f.to_local(lon_a, lat_a);
                    let (eb, nb) = f.to_local(lon_b, lat_b);
                    let plane = ((ea - eb).powi(2) + (na - nb).powi(2)).sqrt();
                    let geod = Geodesic.distance(Point::new(lon_a, lat_a), Point::new(lon_b, lat_b));
                    if geod > 1.0 {
                        assert!((plane - geod).abs() / geod < 1e-4, "{plane} vs {geod}");
                    }
                }
            }
        }
    }

    // The documented extent (config::scenario::MAX_EXTENT_KM = 50 km): radial plane distances
    // shrink by 1 − cos(d/R) ≈ 31 ppm at 50 km; against Karney geodesics (geo) within 40 ppm.
    #[test]
    fn plane_distance_within_40_ppm_at_50km() {
        for &(lat0, lon0) in &[(0.0, 0.0), (45.0, 7.0), (64.1, -21.9)] {
            let f = LocalFrame::new(lat0, lon0);
            for &(e, n) in &[(50_000.0, 0.0), (0.0, -50_000.0), (35_355.0, 35_355.0)] {
                let (lon, lat) = f.to_geo(e, n);
                let geod = Geodesic.distance(Point::new(lon0, lat0), Point::new(lon, lat));
                let plane = f64::hypot(e, n);
                assert!((plane - geod).abs() / geod < 4e-5, "{lat0} {e},{n}: {plane} vs {geod}");
            }
        }
    }

    #[test]
    fn to_geo_inverts_to_local() {
        let f = LocalFrame::new(51.2, -3.1);
        let (lon, lat) = f.to_geo(5_432.1, -7_654.3);
        let (e, n) = f.to_local(lon, lat);
        assert!((e - 5_432.1).abs() < 1e-5 && (n + 7_654.3).abs() < 1e-5);
    }

    // Reference: geo's Geodesic bearing (Karney 2013). Far from the origin (15 km east at
    // 60° N) the plane's north is turned by the meridian convergence (about 0.23° there);
    // corrected by `north_deg`, plane bearings agree with geodesic azimuths at the point to
    // 0.01° out to 20 km.
    #[test]
    fn corrected_bearings_match_geodesic_azimuth_far_from_origin() {
        use geo::Bearing;
        let f = LocalFrame::new(60.0, 10.0);
        let (lon_a, lat_a) = f.to_geo(15_000.0, 2_000.0);
        let (xa, ya) = f.to_local(lon_a, lat_a);
        assert!(f.north_deg(lon_a, lat_a).abs() > 0.2, "{}", f.north_deg(lon_a, lat_a));
        for &(de, dn) in &[(0.0, 19_000.0), (19_000.0, 0.0), (-13_000.0, 13_000.0), (5_000.0, -18_000.0)] {
            let (lon_b, lat_b) = f.to_geo(xa + de, ya + dn);
            let g = Geodesic.bearing(Point::new(lon_a, lat_a), Point::new(lon_b, lat_b)).rem_euclid(360.0);
            let (xb, yb) = f.to_local(lon_b, lat_b);
            let plane = (bearing_deg(xb - xa, yb - ya) - f.north_deg(lon_a, lat_a)).rem_euclid(360.0);
            let diff = (plane - g + 540.0) % 360.0 - 180.0;
            assert!(diff.abs() < 0.01, "{de},{dn}: {plane} vs {g}");
        }
    }

    // Reference: geo's Geodesic bearing (Karney 2013); the plane bearing of a point 5 km away
    // agrees to a few hundredths of a degree (meridian convergence is second order here).
    #[test]
    fn bearing_matches_geodesic_azimuth() {
        use geo::Bearing;
        let f = LocalFrame::new(48.0, 11.0);
        for &(e, n) in &[(5000.0, 0.0), (0.0, 5000.0), (-3000.0, -4000.0), (3000.0, -4000.0)] {
            let (lon, lat) = f.to_geo(e, n);
            let g = Geodesic.bearing(Point::new(11.0, 48.0), Point::new(lon, lat));
            let g = if g < 0.0 { g + 360.0 } else { g };
            let diff = (bearing_deg(e, n) - g + 540.0) % 360.0 - 180.0;
            assert!(diff.abs() < 0.05, "{e},{n}: {} vs {g}", bearing_deg(e, n));
        }
    }
}
