#pragma once
// Private to io: one place that registers GDAL's drivers and turns its failures into lookfar's
// errors with the step's name in front.
#include <string>

namespace lookfar::io_detail {

/// Registers GDAL's drivers once and silences GDAL's own printing to stderr.
void ensureGdal();
/// The last error GDAL recorded (empty if none), then clears it.
std::string lastGdalError();

}  // namespace lookfar::io_detail
