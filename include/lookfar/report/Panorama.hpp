#pragma once
// The panorama of one spot's horizon (horizon --at --plot): azimuth across, horizon angle up,
// the terrain filled below its horizon, the eye's horizontal, the sea-horizon dip and the
// highest point marked; the directions where the DEM ends within the reach shaded, with a legend
// row below the plot.
#include <string>

#include "lookfar/horizon/HorizonProfile.hpp"

namespace lookfar {

/// The SVG of `p` under `title`; `no_terrain` (when not "") is written across the plot instead
/// of a horizon.
std::string panoramaSvg(const HorizonProfile& p, const std::string& title,
                        const std::string& no_terrain);

}  // namespace lookfar
