# The fuzz targets of the text parsers (issue 12 item 19), included when LOOKFAR_FUZZ: one
# executable fuzz_<target> per tests/fuzz/fuzz_<target>.cpp, linked with libFuzzer's main.
# tools/fuzz configures a separate build folder with clang and runs each for a bounded time.
file(GLOB LOOKFAR_FUZZ_MAINS CONFIGURE_DEPENDS ${CMAKE_CURRENT_SOURCE_DIR}/tests/fuzz/fuzz_*.cpp)
add_library(lookfar_fuzz_targets STATIC ${CMAKE_CURRENT_SOURCE_DIR}/tests/fuzz/FuzzTargets.cpp)
target_link_libraries(lookfar_fuzz_targets PUBLIC lookfar::core PRIVATE lookfar_warnings)
set(LOOKFAR_FUZZ_TARGETS)
foreach(main IN LISTS LOOKFAR_FUZZ_MAINS)
  get_filename_component(name ${main} NAME_WE)
  add_executable(${name} ${main})
  target_link_libraries(${name} PRIVATE lookfar_fuzz_targets lookfar_warnings)
  target_link_options(${name} PRIVATE -fsanitize=fuzzer)
  list(APPEND LOOKFAR_FUZZ_TARGETS ${name})
endforeach()
add_custom_target(lookfar_fuzz DEPENDS ${LOOKFAR_FUZZ_TARGETS})
