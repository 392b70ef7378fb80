#pragma once
// A point in a CRS's own units (x/easting/longitude first), shared by the layers that place,
// sample and write points.

namespace lookfar {

struct MapPoint {
    double x = 0;
    double y = 0;
};

}  // namespace lookfar
