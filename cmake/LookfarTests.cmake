# lookfar's tests, included from the top CMakeLists.txt when LOOKFAR_BUILD_TESTS.
#
# One GoogleTest executable, lookfar_tests, holds every tests/**/*.cpp but tests/consumer (any
# new file joins it). Its tests are registered with ctest per folder, with a label (unit,
# engines, cli) and a time limit each; tests that read the USGS sample (docs/references.md row
# 13) also require the fixture that converts it. Which test belongs where is read from the
# sources at configure time (lookfar_scan_tests below): the suites of TEST(Suite, Name) in each
# folder, and the tests whose body names the sample (usgsSample() or usgs_jacksboro). CMake
# re-reads them when a test file changes.
find_package(GTest REQUIRED)
include(GoogleTest)

file(GLOB_RECURSE LOOKFAR_TEST_SOURCES CONFIGURE_DEPENDS ${CMAKE_CURRENT_SOURCE_DIR}/tests/*.cpp)
list(FILTER LOOKFAR_TEST_SOURCES EXCLUDE REGEX "/tests/consumer/")
# The libFuzzer entry points (tests/fuzz/fuzz_*.cpp) build only with LOOKFAR_FUZZ; the targets
# they call (tests/fuzz/FuzzTargets.cpp) join lookfar_tests, which runs the seed corpus.
list(FILTER LOOKFAR_TEST_SOURCES EXCLUDE REGEX "/tests/fuzz/fuzz_[A-Za-z0-9_]*\\.cpp$")
add_executable(lookfar_tests ${LOOKFAR_TEST_SOURCES})
target_include_directories(lookfar_tests PRIVATE ${CMAKE_CURRENT_SOURCE_DIR}/tests)
target_link_libraries(lookfar_tests PRIVATE lookfar::core GTest::gtest GTest::gtest_main
                                            PROJ::proj GDAL::GDAL lookfar_warnings)
target_compile_definitions(lookfar_tests PRIVATE
  LOOKFAR_SOURCE_DIR="${CMAKE_CURRENT_SOURCE_DIR}"
  LOOKFAR_BINARY_DIR="${CMAKE_CURRENT_BINARY_DIR}"
  LOOKFAR_CLI_PATH="$<TARGET_FILE:lookfar>"
  LOOKFAR_TEST_DATA_DIR="${CMAKE_CURRENT_BINARY_DIR}/test_data")
add_dependencies(lookfar_tests lookfar)

# The USGS sample (docs/references.md row 13) is converted at test time, never committed.
add_test(NAME convert_usgs_sample
         COMMAND ${CMAKE_CURRENT_SOURCE_DIR}/tools/convert-usgs-sample
                 ${CMAKE_CURRENT_BINARY_DIR}/test_data/usgs_jacksboro.tif)
set_tests_properties(convert_usgs_sample PROPERTIES FIXTURES_SETUP usgs_sample LABELS data
                                                    TIMEOUT 120)
file(MAKE_DIRECTORY ${CMAKE_CURRENT_BINARY_DIR}/test_data)

# Time limits per test, seconds: generous for a busy 2-core machine (the slowest test takes
# about 15 s on a quiet one), short enough that a hung test fails the run.
set(LOOKFAR_TIMEOUT_unit 60)
set(LOOKFAR_TIMEOUT_engines 300)
set(LOOKFAR_TIMEOUT_cli 300)

# lookfar_scan_tests(FILE SUITES_VAR SAMPLE_TESTS_VAR): the suites of the TEST(Suite, Name)
# macros of FILE, and the tests ("Suite.Name") that read the USGS sample. A test reads it when its
# body (up to the first "}" alone on a line, as clang-format closes it) names the sample; when a
# helper outside any test body names it, every test of the file counts as reading it.
function(lookfar_scan_tests file suites_var sample_var)
  set(sample_re "usgsSample\\(|usgs_jacksboro")
  set(head_re "^TEST(_F|_P)?\\([ \t\r\n]*([A-Za-z_][A-Za-z0-9_]*)[ \t\r\n]*,[ \t\r\n]*([A-Za-z_][A-Za-z0-9_]*)")
  file(READ ${file} text)
  set(text "\n${text}")
  set(suites)
  set(tests)
  set(sample_tests)
  set(file_wide OFF)
  string(FIND "${text}" "\nTEST" at)
  if(at EQUAL -1)
    set(${suites_var} "" PARENT_SCOPE)
    set(${sample_var} "" PARENT_SCOPE)
    return()
  endif()
  string(SUBSTRING "${text}" 0 ${at} preamble)
  if(preamble MATCHES "${sample_re}")
    set(file_wide ON)
  endif()
  math(EXPR at "${at} + 1")
  string(SUBSTRING "${text}" ${at} -1 rest)
  while(NOT rest STREQUAL "")
    string(SUBSTRING "${rest}" 1 -1 tail)
    string(FIND "${tail}" "\nTEST" next)
    if(next EQUAL -1)
      set(chunk "${rest}")
      set(rest "")
    else()
      math(EXPR cut "${next} + 1")
      string(SUBSTRING "${rest}" 0 ${cut} chunk)
      math(EXPR cut "${cut} + 1")
      string(SUBSTRING "${rest}" ${cut} -1 rest)
    endif()
    if(NOT chunk MATCHES "${head_re}")
      continue()  # e.g. a TEST_SOMETHING macro of our own
    endif()
    set(name "${CMAKE_MATCH_2}.${CMAKE_MATCH_3}")
    list(APPEND suites ${CMAKE_MATCH_2})
    list(APPEND tests ${name})
    string(FIND "${chunk}" "\n}\n" body_end)
    if(body_end EQUAL -1)
      set(body "${chunk}")
      set(after "")
    else()
      string(SUBSTRING "${chunk}" 0 ${body_end} body)
      string(SUBSTRING "${chunk}" ${body_end} -1 after)
    endif()
    if(body MATCHES "${sample_re}")
      list(APPEND sample_tests ${name})
    endif()
    if(after MATCHES "${sample_re}")
      set(file_wide ON)
    endif()
  endwhile()
  if(file_wide)
    set(sample_tests ${tests})
  endif()
  list(REMOVE_DUPLICATES suites)
  set(${suites_var} ${suites} PARENT_SCOPE)
  set(${sample_var} ${sample_tests} PARENT_SCOPE)
endfunction()

set(LOOKFAR_ALL_SUITES)
set(LOOKFAR_SUITE_FOLDER)  # "Suite=folder" pairs, to catch a suite defined in two folders
foreach(folder unit engines cli)
  file(GLOB_RECURSE sources CONFIGURE_DEPENDS ${CMAKE_CURRENT_SOURCE_DIR}/tests/${folder}/*.cpp)
  set(folder_suites)
  set(sample_tests)
  foreach(source IN LISTS sources)
    set_property(DIRECTORY APPEND PROPERTY CMAKE_CONFIGURE_DEPENDS ${source})
    lookfar_scan_tests(${source} file_suites file_sample_tests)
    list(APPEND folder_suites ${file_suites})
    list(APPEND sample_tests ${file_sample_tests})
  endforeach()
  list(REMOVE_DUPLICATES folder_suites)
  foreach(suite IN LISTS folder_suites)
    foreach(pair IN LISTS LOOKFAR_SUITE_FOLDER)
      if(pair MATCHES "^${suite}=(.*)$")
        message(FATAL_ERROR "test suite ${suite} is defined in tests/${CMAKE_MATCH_1} and in "
                            "tests/${folder}: a suite lives in one folder (rename one of them)")
      endif()
    endforeach()
    list(APPEND LOOKFAR_SUITE_FOLDER "${suite}=${folder}")
  endforeach()
  list(APPEND LOOKFAR_ALL_SUITES ${folder_suites})
  if(NOT folder_suites)
    continue()
  endif()

  list(TRANSFORM folder_suites APPEND ".*")
  list(JOIN folder_suites ":" filter)
  if(sample_tests)
    list(JOIN sample_tests ":" sample_filter)
    string(APPEND filter "-${sample_filter}")
    gtest_discover_tests(lookfar_tests DISCOVERY_TIMEOUT 60 TEST_FILTER "${sample_filter}"
                         PROPERTIES LABELS ${folder} TIMEOUT ${LOOKFAR_TIMEOUT_${folder}}
                                    FIXTURES_REQUIRED usgs_sample)
  endif()
  gtest_discover_tests(lookfar_tests DISCOVERY_TIMEOUT 60 TEST_FILTER "${filter}"
                       PROPERTIES LABELS ${folder} TIMEOUT ${LOOKFAR_TIMEOUT_${folder}})
endforeach()
# Any test the reading above missed (another folder, a macro it does not know) still runs,
# labelled "other", with the sample fixture and the longest limit.
list(TRANSFORM LOOKFAR_ALL_SUITES APPEND ".*")
list(JOIN LOOKFAR_ALL_SUITES ":" known)
gtest_discover_tests(lookfar_tests DISCOVERY_TIMEOUT 60 TEST_FILTER "-${known}"
                     PROPERTIES LABELS other TIMEOUT 300 FIXTURES_REQUIRED usgs_sample)

# Layering rule of docs/design.md: the algorithm layers never include GDAL, PROJ or CLI11.
add_test(NAME layering_algorithms_do_not_touch_io
         COMMAND ${CMAKE_CURRENT_SOURCE_DIR}/tools/check-layers ${CMAKE_CURRENT_SOURCE_DIR})
set_tests_properties(layering_algorithms_do_not_touch_io PROPERTIES LABELS unit TIMEOUT 30)

if(LOOKFAR_INSTALL)
  include(cmake/LookfarPackageTests.cmake)
endif()
