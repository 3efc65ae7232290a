# Builds the evaluation thread-safety test with ThreadSanitizer and runs the
# multi-threaded case: eight threads evaluating one network must race on
# nothing.
#   cmake -DCXX=... -DSOURCE_DIR=... -DWORK_DIR=... -DEIGEN_INCLUDE=... -DXSIMD_INCLUDE=... -DDOCTEST_INCLUDE=...
#         -P run_thread_sanitizer.cmake
file(MAKE_DIRECTORY "${WORK_DIR}")
set(binary "${WORK_DIR}/guarded_network_tsan")
execute_process(
  COMMAND "${CXX}" -std=c++17 -O1 -g -fsanitize=thread -DDOCTEST_CONFIG_IMPLEMENT_WITH_MAIN
          -DWAVESTACK_TEST_DATA="${SOURCE_DIR}/tests/data"
          -I "${SOURCE_DIR}/include" -I "${SOURCE_DIR}/tests" -I "${EIGEN_INCLUDE}" -I "${XSIMD_INCLUDE}"
          -I "${DOCTEST_INCLUDE}" "${SOURCE_DIR}/tests/guarded_network_test.cpp" -o "${binary}" -pthread
  RESULT_VARIABLE built)
if(NOT built EQUAL 0)
  message("could not build with -fsanitize=thread (libtsan missing?): skipped")
  cmake_language(EXIT 77)
endif()
execute_process(COMMAND "${binary}" "--test-case=evaluation from eight threads*"
                RESULT_VARIABLE result)
if(NOT result EQUAL 0)
  message(FATAL_ERROR "ThreadSanitizer or the test reported a failure (exit ${result})")
endif()
