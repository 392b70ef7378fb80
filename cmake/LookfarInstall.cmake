# Installs lookfar as a package: the static library, the public headers (with the generated
# Version.hpp), the CLI, lookfarConfig.cmake + lookfarConfigVersion.cmake (target
# lookfar::lookfar) and lookfar.pc. Included from the top CMakeLists.txt when LOOKFAR_INSTALL.
set(LOOKFAR_CMAKE_DIR ${CMAKE_INSTALL_LIBDIR}/cmake/lookfar)

install(TARGETS lookfar_core EXPORT lookfarTargets
        ARCHIVE DESTINATION ${CMAKE_INSTALL_LIBDIR}
        LIBRARY DESTINATION ${CMAKE_INSTALL_LIBDIR})
install(DIRECTORY ${CMAKE_CURRENT_SOURCE_DIR}/include/lookfar
        DESTINATION ${CMAKE_INSTALL_INCLUDEDIR} FILES_MATCHING PATTERN "*.hpp")
install(FILES ${CMAKE_CURRENT_BINARY_DIR}/generated/lookfar/Version.hpp
        DESTINATION ${CMAKE_INSTALL_INCLUDEDIR}/lookfar)
if(LOOKFAR_BUILD_CLI)
  install(TARGETS lookfar RUNTIME DESTINATION ${CMAKE_INSTALL_BINDIR})
endif()

install(EXPORT lookfarTargets NAMESPACE lookfar:: FILE lookfarTargets.cmake
        DESTINATION ${LOOKFAR_CMAKE_DIR})
configure_package_config_file(${CMAKE_CURRENT_LIST_DIR}/lookfarConfig.cmake.in
                              ${CMAKE_CURRENT_BINARY_DIR}/package/lookfarConfig.cmake
                              INSTALL_DESTINATION ${LOOKFAR_CMAKE_DIR})
# 0.x: a minor release may change the API, so only the same major.minor is compatible.
write_basic_package_version_file(${CMAKE_CURRENT_BINARY_DIR}/package/lookfarConfigVersion.cmake
                                 VERSION ${PROJECT_VERSION} COMPATIBILITY SameMinorVersion)
install(FILES ${CMAKE_CURRENT_BINARY_DIR}/package/lookfarConfig.cmake
              ${CMAKE_CURRENT_BINARY_DIR}/package/lookfarConfigVersion.cmake
        DESTINATION ${LOOKFAR_CMAKE_DIR})

# pkg-config: liblookfar.a is static, so its users link GDAL and PROJ as well (Requires).
if(LOOKFAR_WITH_OPENMP)
  set(LOOKFAR_PC_OPENMP "${OpenMP_CXX_FLAGS}")
else()
  set(LOOKFAR_PC_OPENMP "")
endif()
# The prefix is found from the .pc file's own place, so that `cmake --install --prefix P` and
# moving the tree both work (pkg-config's ${pcfiledir}).
if(IS_ABSOLUTE "${CMAKE_INSTALL_LIBDIR}" OR IS_ABSOLUTE "${CMAKE_INSTALL_INCLUDEDIR}")
  message(FATAL_ERROR "lookfar's install needs relative CMAKE_INSTALL_LIBDIR and INCLUDEDIR")
endif()
file(RELATIVE_PATH LOOKFAR_PC_UP "/${CMAKE_INSTALL_LIBDIR}/pkgconfig" "/")
string(REGEX REPLACE "/$" "" LOOKFAR_PC_UP "${LOOKFAR_PC_UP}")
configure_file(${CMAKE_CURRENT_LIST_DIR}/lookfar.pc.in ${CMAKE_CURRENT_BINARY_DIR}/package/lookfar.pc
               @ONLY)
install(FILES ${CMAKE_CURRENT_BINARY_DIR}/package/lookfar.pc
        DESTINATION ${CMAKE_INSTALL_LIBDIR}/pkgconfig)
