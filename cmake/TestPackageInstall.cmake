# ctest fixture step: installs the build BUILD_DIR into a fresh PREFIX (removing what an earlier
# run left in WORK_DIR, so that a file the install forgets cannot linger), then checks that
# every file of the package is there.
file(REMOVE_RECURSE "${WORK_DIR}")
set(config_args)
if(CONFIG)
  set(config_args --config "${CONFIG}")
endif()
execute_process(COMMAND "${CMAKE_COMMAND}" --install "${BUILD_DIR}" --prefix "${PREFIX}"
                        ${config_args}
                RESULT_VARIABLE rc)
if(NOT rc EQUAL 0)
  message(FATAL_ERROR "cmake --install into ${PREFIX} failed (${rc})")
endif()
file(GLOB_RECURSE installed RELATIVE "${PREFIX}" "${PREFIX}/*")
foreach(pattern "^bin/lookfar$" "^lib[^/]*(/[^/]+)?/liblookfar\\.a$"
                "^include/lookfar/lookfar\\.hpp$" "^include/lookfar/Version\\.hpp$"
                "^include/lookfar/viewshed/Viewshed\\.hpp$"
                "/cmake/lookfar/lookfarConfig\\.cmake$" "/cmake/lookfar/lookfarConfigVersion\\.cmake$"
                "/cmake/lookfar/lookfarTargets\\.cmake$" "/pkgconfig/lookfar\\.pc$")
  set(found ${installed})
  list(FILTER found INCLUDE REGEX "${pattern}")
  if(NOT found)
    message(FATAL_ERROR "the install into ${PREFIX} lacks a file matching ${pattern}")
  endif()
endforeach()
message(STATUS "package installed into ${PREFIX}")
