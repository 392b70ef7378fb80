# Builds tests/consumer/main.cpp with the flags `pkg-config lookfar` gives for the package
# installed in PREFIX, then runs it (it exits non-zero on a wrong viewshed).
file(GLOB pcdirs "${PREFIX}/lib*/pkgconfig" "${PREFIX}/lib*/*/pkgconfig")
if(NOT pcdirs)
  message(FATAL_ERROR "no pkgconfig folder under ${PREFIX}")
endif()
string(REPLACE ";" ":" pcpath "${pcdirs}")
set(ENV{PKG_CONFIG_PATH} "${pcpath}")
execute_process(COMMAND pkg-config --modversion lookfar OUTPUT_VARIABLE version
                OUTPUT_STRIP_TRAILING_WHITESPACE RESULT_VARIABLE rc)
if(NOT rc EQUAL 0 OR NOT version STREQUAL VERSION)
  message(FATAL_ERROR "pkg-config --modversion lookfar gave '${version}' (${rc}), expected ${VERSION}")
endif()
execute_process(COMMAND pkg-config --cflags --libs lookfar OUTPUT_VARIABLE flags
                OUTPUT_STRIP_TRAILING_WHITESPACE RESULT_VARIABLE rc)
if(NOT rc EQUAL 0)
  message(FATAL_ERROR "pkg-config --cflags --libs lookfar failed (${rc})")
endif()
separate_arguments(flags UNIX_COMMAND "${flags}")
execute_process(COMMAND "${CXX}" -std=c++17 -O1 "${SOURCE}" -o "${OUTPUT}" ${flags}
                RESULT_VARIABLE rc)
if(NOT rc EQUAL 0)
  message(FATAL_ERROR "compiling ${SOURCE} with `pkg-config lookfar` flags failed: ${flags}")
endif()
execute_process(COMMAND "${OUTPUT}" RESULT_VARIABLE rc)
if(NOT rc EQUAL 0)
  message(FATAL_ERROR "${OUTPUT} failed (${rc})")
endif()
