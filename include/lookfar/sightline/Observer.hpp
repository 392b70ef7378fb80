#pragma once
#include <string>

namespace lookfar {

/// An observer (or target station) standing at the centre of a DEM cell.
struct Observer {
    std::string name;
    int col = 0;                 ///< cell column of the observer
    int row = 0;                 ///< cell row of the observer
    double height_m = 1.7;       ///< eye above the cell's ground, metres, ≥ 0
    double latitude_deg = 45.0;  ///< geodetic latitude of the cell, for Euler's radius
};

}  // namespace lookfar
