# ratewell_add_test_suite(NAME DIR LIBS...): one GoogleTest executable from
# every *_test.cc in DIR, each test registered with CTest. Tests find their
# data through the RATEWELL_TEST_DATA_DIR definition, never a hard-coded path.
include(GoogleTest)
# Under RATEWELL_SANITIZE every test program carries LeakSanitizer's
# suppressions of system libraries' own leaks (tests/lsan_suppressions.cc).
set(RATEWELL_TEST_EXTRA_SOURCES "")
if(RATEWELL_SANITIZE)
  set(RATEWELL_TEST_EXTRA_SOURCES ${PROJECT_SOURCE_DIR}/tests/lsan_suppressions.cc)
endif()
function(ratewell_add_test_suite name dir)
  file(GLOB sources CONFIGURE_DEPENDS ${dir}/*_test.cc)
  if(NOT sources)
    message(STATUS "ratewell: no tests yet in ${dir}")
    return()
  endif()
  add_executable(${name} ${sources} ${RATEWELL_TEST_EXTRA_SOURCES})
  target_link_libraries(${name} PRIVATE ${ARGN} GTest::gmock GTest::gtest_main)
  target_compile_definitions(${name} PRIVATE
    RATEWELL_TEST_DATA_DIR="${PROJECT_SOURCE_DIR}/tests/data"
    RATEWELL_BINARY_DIR="${PROJECT_BINARY_DIR}")
  gtest_discover_tests(${name} DISCOVERY_TIMEOUT 60
    PROPERTIES ENVIRONMENT "QT_QPA_PLATFORM=offscreen")
endfunction()
