//! Map positions of a study's wells: projected coordinates as given, or latitude and
//! longitude projected into one UTM zone chosen from the data.
//!
//! A wells file gives `x`, `y` (projected metres, in whatever grid the team uses) or
//! `lat`, `lon` (degrees, WGS 84). The study map and the sections need metres on one
//! plane. Positions given as `x`, `y` are used as they are. Latitudes and longitudes
//! are projected with the transverse Mercator projection of the Universal Transverse
//! Mercator (UTM) system on the WGS 84 ellipsoid (scale 0.9996 on the central meridian,
//! false easting 500 km, false northing 0 in the north and 10,000 km in the south),
//! in the one zone that holds the middle of the wells, so that every well of the study
//! lies on one grid even where the wells straddle a zone boundary (the projection stays
//! accurate to well under a metre within a few degrees of the central meridian). The
//! projection itself is the `utm` crate's; this module chooses the zone and keeps the
//! northings continuous across the equator.
//!
//! Two grids cannot be mixed: a study whose wells come some with only `x`, `y` and
//! others with only `lat`, `lon` is drawn on the projected grid, and the wells without
//! `x`, `y` are listed as left off the map.

use serde::Serialize;

/// One UTM zone of the WGS 84 ellipsoid.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct UtmZone {
    /// 1 to 60; zone `n` has its central meridian at `6n - 183` degrees.
    pub number: u8,
    /// Northern hemisphere (false northing 0) or southern (false northing 10,000 km).
    pub north: bool,
}

/// False northing of the southern-hemisphere UTM zones (m).
const SOUTHERN_FALSE_NORTHING_M: f64 = 10_000_000.0;

impl UtmZone {
    /// The zone that holds the middle of the points (the median latitude and longitude),
    /// `None` when there are none. Longitudes near the antimeridian are taken as a
    /// continuous range.
    pub fn for_points(lat_lon_deg: &[(f64, f64)]) -> Option<Self> {
        if lat_lon_deg.is_empty() {
            return None;
        }
        let mut lats: Vec<f64> = lat_lon_deg.iter().map(|p| p.0).collect();
        let mut lons: Vec<f64> = lat_lon_deg.iter().map(|p| p.1).collect();
        // Wells on both sides of the antimeridian: count the western ones as east of 180.
        let spans_antimeridian =
            lons.iter().any(|&l| l > 150.0) && lons.iter().any(|&l| l < -150.0);
        if spans_antimeridian {
            for l in &mut lons {
                if *l < 0.0 {
                    *l += 360.0;
                }
            }
        }
        let (lat, mut lon) = (median(&mut lats), median(&mut lons));
        if lon >= 180.0 {
            lon -= 360.0;
        }
        // The regular 6-degree zones; the exceptions around Norway and Svalbard exist for
        // map sheets and do not matter for a study's own grid.
        let number = (((lon + 180.0) / 6.0).floor() as i64).clamp(0, 59) as u8 + 1;
        Some(UtmZone {
            number,
            north: lat >= 0.0,
        })
    }

    /// The projected position (easting, northing) in metres of a point in this zone,
    /// also for points outside the zone (the projection is continued beyond it) and
    /// across the equator (northings stay continuous: negative south of the equator in
    /// a northern zone, above 10,000 km north of it in a southern one).
    pub fn project(&self, lat_deg: f64, lon_deg: f64) -> (f64, f64) {
        let (northing, easting, _convergence) = utm::to_utm_wgs84(lat_deg, lon_deg, self.number);
        // The crate applies the false northing by the point's own hemisphere.
        let point_south = lat_deg <= 0.0;
        let northing = match (self.north, point_south) {
            (true, true) => northing - SOUTHERN_FALSE_NORTHING_M,
            (false, false) => northing + SOUTHERN_FALSE_NORTHING_M,
            _ => northing,
        };
        (easting, northing)
    }

    /// The projection's name as the EPSG registry writes it, for the map.
    pub fn name(&self) -> String {
        format!(
            "WGS 84 / UTM zone {}{}",
            self.number,
            if self.north { "N" } else { "S" }
        )
    }
}

fn median(values: &mut [f64]) -> f64 {
    values.sort_by(f64::total_cmp);
    let n = values.len();
    if n % 2 == 1 {
        values[n / 2]
    } else {
        0.5 * (values[n / 2 - 1] + values[n / 2])
    }
}

/// Where a well stands, as the wells file gave it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GivenPosition {
    /// Projected easting and northing (m).
    pub xy_m: Option<(f64, f64)>,
    /// Latitude and longitude (degrees, WGS 84).
    pub lat_lon_deg: Option<(f64, f64)>,
}

/// Which plane the map positions are on.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum MapGrid {
    /// The `x`, `y` the team gave (their own projected grid).
    AsGiven,
    /// Latitudes and longitudes projected into one UTM zone.
    Utm { zone: UtmZone, name: String },
}

impl MapGrid {
    /// How the map names its grid.
    pub fn label(&self) -> String {
        match self {
            MapGrid::AsGiven => "x, y as given in the wells file (m)".to_string(),
            MapGrid::Utm { name, .. } => {
                format!("{name} (m), projected from latitude and longitude")
            }
        }
    }
}

/// The wells' positions on one plane.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MapPositions {
    pub grid: MapGrid,
    /// Easting and northing (m) of each well, in the order given; `None` when the well
    /// has no position on this grid.
    pub positions_m: Vec<Option<(f64, f64)>>,
    /// Indexes of wells that have a position, but not on this grid (only lat/lon on a
    /// projected grid): they are left off the map, and the map should say so.
    pub left_off: Vec<usize>,
}

/// Put every well on one plane: the given `x`, `y` when any well has them (wells with
/// only `lat`, `lon` are then left off), otherwise every `lat`, `lon` projected into
/// the UTM zone of the middle of the wells. `None` when no well has a position.
pub fn map_positions(wells: &[GivenPosition]) -> Option<MapPositions> {
    if wells.iter().any(|w| w.xy_m.is_some()) {
        let left_off = wells
            .iter()
            .enumerate()
            .filter(|(_, w)| w.xy_m.is_none() && w.lat_lon_deg.is_some())
            .map(|(i, _)| i)
            .collect();
        return Some(MapPositions {
            grid: MapGrid::AsGiven,
            positions_m: wells.iter().map(|w| w.xy_m).collect(),
            left_off,
        });
    }
    let geographic: Vec<(f64, f64)> = wells.iter().filter_map(|w| w.lat_lon_deg).collect();
    let zone = UtmZone::for_points(&geographic)?;
    Some(MapPositions {
        grid: MapGrid::Utm {
            zone,
            name: zone.name(),
        },
        positions_m: wells
            .iter()
            .map(|w| w.lat_lon_deg.map(|(lat, lon)| zone.project(lat, lon)))
            .collect(),
        left_off: Vec::new(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Agreement with the reference projections below (m). PROJ uses a higher-order
    /// series than the `utm` crate; the two agree to a few millimetres within a zone
    /// and its neighbours, far below what a basin map shows.
    const MM: f64 = 0.005;

    // Reference values: WGS 84 to UTM by PROJ 9.5.1 through pyproj 3.7.2
    // (Transformer.from_crs("EPSG:4326", "EPSG:326zz"/"EPSG:327zz")), computed on
    // 2026-12-02, independent of the `utm` crate used here.
    #[test]
    fn projection_agrees_with_proj() {
        let cases = [
            // (lat, lon, zone, north, easting, northing)
            (52.0, 4.5, 31, true, 602_972.982, 5_762_100.490),
            (-33.9, 18.4, 34, false, 259_583.222, 6_245_888.045),
            (60.5, 2.0, 31, true, 445_067.557, 6_707_514.411),
            // The same point projected into the neighbouring zone 30 (outside it).
            (60.5, 2.0, 30, true, 774_489.652, 6_717_531.155),
        ];
        for (lat, lon, number, north, e, n) in cases {
            let (x, y) = UtmZone { number, north }.project(lat, lon);
            assert!(
                (x - e).abs() < MM,
                "{lat} {lon} zone {number}: easting {x} vs {e}"
            );
            assert!(
                (y - n).abs() < MM,
                "{lat} {lon} zone {number}: northing {y} vs {n}"
            );
        }
    }

    #[test]
    fn the_zone_holds_the_middle_of_the_wells() {
        // Central meridian of zone 31 is 3 E (zones are 6 degrees wide from 180 W).
        let wells = [(52.0, 2.9), (52.1, 3.2), (52.3, 6.2)];
        assert_eq!(
            UtmZone::for_points(&wells),
            Some(UtmZone {
                number: 31,
                north: true
            })
        );
        assert_eq!(UtmZone::for_points(&[(-10.0, -70.5)]).unwrap().number, 19);
        assert_eq!(UtmZone::for_points(&[]), None);
        assert_eq!(
            UtmZone {
                number: 31,
                north: true
            }
            .name(),
            "WGS 84 / UTM zone 31N"
        );
        assert_eq!(
            UtmZone {
                number: 34,
                north: false
            }
            .name(),
            "WGS 84 / UTM zone 34S"
        );
    }

    #[test]
    fn wells_across_the_antimeridian_share_a_zone_next_to_it() {
        let zone = UtmZone::for_points(&[(-17.0, 179.6), (-17.1, -179.8), (-16.9, 179.9)]).unwrap();
        assert!(zone.number == 60 || zone.number == 1, "{zone:?}");
    }

    #[test]
    fn northings_stay_continuous_across_the_equator() {
        let zone = UtmZone {
            number: 33,
            north: true,
        };
        let (_, y_north) = zone.project(0.01, 15.0);
        let (_, y_south) = zone.project(-0.01, 15.0);
        // 0.02 degrees of latitude on the central meridian: 0.9996 x ~2,211 m.
        let spacing = y_north - y_south;
        assert!((spacing - 2_210.6).abs() < 1.0, "{spacing}");
        let south = UtmZone {
            number: 33,
            north: false,
        };
        let (_, ys_north) = south.project(0.01, 15.0);
        let (_, ys_south) = south.project(-0.01, 15.0);
        assert!((ys_north - ys_south - spacing).abs() < MM);
        assert!(ys_south < SOUTHERN_FALSE_NORTHING_M && ys_north > SOUTHERN_FALSE_NORTHING_M);
    }

    #[test]
    fn given_coordinates_win_and_lat_lon_only_wells_are_left_off() {
        let wells = [
            GivenPosition {
                xy_m: Some((1000.0, 2000.0)),
                lat_lon_deg: Some((52.0, 4.0)),
            },
            GivenPosition {
                xy_m: None,
                lat_lon_deg: Some((52.1, 4.1)),
            },
            GivenPosition {
                xy_m: None,
                lat_lon_deg: None,
            },
        ];
        let map = map_positions(&wells).unwrap();
        assert_eq!(map.grid, MapGrid::AsGiven);
        assert_eq!(map.positions_m, vec![Some((1000.0, 2000.0)), None, None]);
        assert_eq!(map.left_off, vec![1]);
    }

    #[test]
    fn lat_lon_wells_are_projected_into_one_zone() {
        let wells = [
            GivenPosition {
                xy_m: None,
                lat_lon_deg: Some((52.0, 4.5)),
            },
            GivenPosition {
                xy_m: None,
                lat_lon_deg: Some((60.5, 2.0)),
            },
            GivenPosition {
                xy_m: None,
                lat_lon_deg: None,
            },
        ];
        let map = map_positions(&wells).unwrap();
        let MapGrid::Utm { zone, name } = &map.grid else {
            panic!("{:?}", map.grid)
        };
        assert_eq!((zone.number, name.as_str()), (31, "WGS 84 / UTM zone 31N"));
        // PROJ values of projection_agrees_with_proj.
        let (x, y) = map.positions_m[0].unwrap();
        assert!((x - 602_972.982).abs() < MM && (y - 5_762_100.490).abs() < MM);
        assert_eq!(map.positions_m[2], None);
        assert!(map.left_off.is_empty());
        assert!(
            map_positions(&[GivenPosition {
                xy_m: None,
                lat_lon_deg: None
            }])
            .is_none()
        );
    }
}
