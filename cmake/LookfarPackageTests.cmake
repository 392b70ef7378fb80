# Tests of the installed package (label "package"). The fixture lookfar_package installs the
# build into a fresh prefix under the build folder; two programs are then built against it from
# tests/consumer, once with CMake (find_package) and once with pkg-config, and run.
set(LOOKFAR_TEST_PACKAGE_DIR ${CMAKE_CURRENT_BINARY_DIR}/package-test)
set(LOOKFAR_TEST_PREFIX ${LOOKFAR_TEST_PACKAGE_DIR}/prefix)

add_test(NAME package_install
         COMMAND ${CMAKE_COMMAND} -DBUILD_DIR=${CMAKE_CURRENT_BINARY_DIR}
                 -DWORK_DIR=${LOOKFAR_TEST_PACKAGE_DIR} -DPREFIX=${LOOKFAR_TEST_PREFIX}
                 -DCONFIG=$<CONFIG> -P ${CMAKE_CURRENT_SOURCE_DIR}/cmake/TestPackageInstall.cmake)
set_tests_properties(package_install PROPERTIES FIXTURES_SETUP lookfar_package)

add_test(NAME package_consumer_cmake
         COMMAND ${CMAKE_CTEST_COMMAND} --build-and-test
                 ${CMAKE_CURRENT_SOURCE_DIR}/tests/consumer ${LOOKFAR_TEST_PACKAGE_DIR}/consumer-cmake
                 --build-generator ${CMAKE_GENERATOR}
                 --build-makeprogram ${CMAKE_MAKE_PROGRAM}
                 --build-options -DCMAKE_PREFIX_PATH=${LOOKFAR_TEST_PREFIX}
                                 -DCMAKE_CXX_COMPILER=${CMAKE_CXX_COMPILER}
                                 -DCMAKE_BUILD_TYPE=${CMAKE_BUILD_TYPE}
                                 -DCMAKE_FIND_USE_PACKAGE_REGISTRY=OFF
                 --test-command ${LOOKFAR_TEST_PACKAGE_DIR}/consumer-cmake/lookfar_consumer)

add_test(NAME package_consumer_pkgconfig
         COMMAND ${CMAKE_COMMAND} -DPREFIX=${LOOKFAR_TEST_PREFIX}
                 -DSOURCE=${CMAKE_CURRENT_SOURCE_DIR}/tests/consumer/main.cpp
                 -DOUTPUT=${LOOKFAR_TEST_PACKAGE_DIR}/consumer-pkgconfig
                 -DCXX=${CMAKE_CXX_COMPILER} -DVERSION=${PROJECT_VERSION}
                 -P ${CMAKE_CURRENT_SOURCE_DIR}/cmake/TestPkgConfigConsumer.cmake)

set_tests_properties(package_consumer_cmake package_consumer_pkgconfig PROPERTIES
                     FIXTURES_REQUIRED lookfar_package)
set_tests_properties(package_install package_consumer_cmake package_consumer_pkgconfig
                     PROPERTIES LABELS package TIMEOUT 300)

add_test(NAME umbrella_header_lists_every_public_header
         COMMAND ${CMAKE_COMMAND} -DSOURCE_DIR=${CMAKE_CURRENT_SOURCE_DIR}
                 -P ${CMAKE_CURRENT_SOURCE_DIR}/cmake/TestUmbrellaHeader.cmake)
set_tests_properties(umbrella_header_lists_every_public_header PROPERTIES LABELS package
                                                                         TIMEOUT 30)
