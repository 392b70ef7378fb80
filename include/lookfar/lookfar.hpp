#pragma once
// lookfar's umbrella header: every public header of the library, for programs that use it as a
// package (find_package(lookfar) → lookfar::lookfar, or pkg-config lookfar). Inside lookfar
// include the headers you need instead. A test (umbrella_header_lists_every_public_header)
// fails when a header under include/lookfar/ is missing here: add new headers in their layer.
#include "lookfar/Version.hpp"

// core
#include "lookfar/core/Ellipsoid.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/FractalTerrain.hpp"
#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/MapPoint.hpp"
#include "lookfar/core/MemorySize.hpp"
#include "lookfar/core/ParallelFor.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"

// earth
#include "lookfar/earth/EarthModel.hpp"

// sightline
#include "lookfar/sightline/Observer.hpp"
#include "lookfar/sightline/SightlineRule.hpp"
#include "lookfar/sightline/SightlineSamples.hpp"

// viewshed
#include "lookfar/viewshed/MultiViewshed.hpp"
#include "lookfar/viewshed/Viewshed.hpp"
#include "lookfar/viewshed/ViewshedSummary.hpp"

// horizon
#include "lookfar/horizon/AsyncSink.hpp"
#include "lookfar/horizon/HorizonEdge.hpp"
#include "lookfar/horizon/HorizonProfile.hpp"
#include "lookfar/horizon/HorizonScan.hpp"
#include "lookfar/horizon/HorizonTiling.hpp"

// link
#include "lookfar/link/Geodesy.hpp"
#include "lookfar/link/Intervisibility.hpp"
#include "lookfar/link/PairGeometry.hpp"
#include "lookfar/link/PathProfile.hpp"

// radio
#include "lookfar/radio/AntennaPattern.hpp"
#include "lookfar/radio/MultiSignal.hpp"
#include "lookfar/radio/Propagation.hpp"
#include "lookfar/radio/Signal.hpp"

// siting
#include "lookfar/siting/CoverageSet.hpp"
#include "lookfar/siting/GreedyCoverage.hpp"
#include "lookfar/siting/SiteSelection.hpp"

// stats
#include "lookfar/stats/GridStats.hpp"
#include "lookfar/stats/ViewshedStats.hpp"

// io
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/Dem.hpp"
#include "lookfar/io/FileNames.hpp"
#include "lookfar/io/HorizonRasters.hpp"
#include "lookfar/io/MemoryBudget.hpp"
#include "lookfar/io/OutputSet.hpp"
#include "lookfar/io/RasterWriter.hpp"
#include "lookfar/io/SitesCsv.hpp"
#include "lookfar/io/VectorOutput.hpp"

// report
#include "lookfar/report/GeoJson.hpp"
#include "lookfar/report/Panorama.hpp"
#include "lookfar/report/Summary.hpp"
#include "lookfar/report/SvgPlot.hpp"
#include "lookfar/report/TextTable.hpp"

// run
#include "lookfar/run/Command.hpp"
#include "lookfar/run/Format.hpp"
#include "lookfar/run/HorizonRun.hpp"
#include "lookfar/run/InfoRun.hpp"
#include "lookfar/run/IntervisRun.hpp"
#include "lookfar/run/LinkRun.hpp"
#include "lookfar/run/Options.hpp"
#include "lookfar/run/RunContext.hpp"
#include "lookfar/run/SelectRun.hpp"
#include "lookfar/run/SignalRun.hpp"
#include "lookfar/run/ViewshedRun.hpp"
