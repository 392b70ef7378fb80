#include "Commands.hpp"

namespace lookfar::cli {

std::vector<Command> allCommands(CLI::App& root) {
    std::vector<Command> all;
    all.push_back(addInfoCommand(root));
    all.push_back(addViewshedCommand(root));
    all.push_back(addHorizonCommand(root));
    all.push_back(addLinkCommand(root));
    all.push_back(addIntervisCommand(root));
    all.push_back(addSelectCommand(root));
    all.push_back(addSignalCommand(root));
    return all;
}

std::string conventionsText() {
    return "\nConventions:\n"
           "  Distances and heights are metres (write 100ft or 30us-ft for feet). Horizontal "
           "units\n"
           "  come from the DEM's CRS; elevations from the band's unit type, else metres "
           "(--z-unit).\n"
           "  Azimuths are degrees clockwise from grid north, measured on the ground; elevation\n"
           "  angles are degrees above the eye's local horizontal (negative below).\n"
           "  Curvature: the ellipsoid's radius along each sightline (default), a sphere, or "
           "flat.\n"
           "  Refraction k (default 0.13, light over land; 0.25 for 4/3-Earth radio) makes the "
           "Earth\n"
           "  look larger: effective radius R/(1-k). A point at distance d appears lowered by\n"
           "  d^2(1-k)/2R.\n"
           "  Observers, stations, candidates and transmitters stand at the centre of the cell\n"
           "  containing the given point (link: at the points themselves); a target is visible\n"
           "  when no terrain between them rises above the straight sightline.\n";
}

std::string cautionText() {
    return "\nCaution: visibility layers are planning aids. DEMs omit buildings and vegetation, "
           "and\n"
           "refraction varies with weather and time of day. Radio coverage also needs a "
           "propagation\n"
           "model; masts, towers and beacons need the permits of the local aviation, planning and\n"
           "radio authorities; survey work follows local codes and licensed practice. Not for\n"
           "navigation or safety-of-life decisions. Radio loss and level layers (signal) are "
           "median\n"
           "predictions for planning, not licensed coverage: where a regulator prescribes its own\n"
           "method, that method and licensed radio engineering prevail.";
}

}  // namespace lookfar::cli
