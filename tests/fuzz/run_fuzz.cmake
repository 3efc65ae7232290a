# Builds the model-file fuzz target with clang (libFuzzer + AddressSanitizer +
# UndefinedBehaviorSanitizer) and runs it for a bounded time.
#   cmake -DSOURCE_DIR=... -DWORK_DIR=... -DSECONDS=60 -DEIGEN_INCLUDE=... -DXSIMD_INCLUDE=... -P run_fuzz.cmake
# Exits with 77 (ctest: skipped) when no clang with libFuzzer is installed.
find_program(CLANGXX NAMES clang++ clang++-14 clang++-15 clang++-16)
if(NOT CLANGXX)
  message("clang++ not found: fuzzing skipped (apt-get install clang libclang-rt-14-dev)")
  cmake_language(EXIT 77)
endif()
file(MAKE_DIRECTORY "${WORK_DIR}/corpus")
file(GLOB seeds "${SOURCE_DIR}/tests/data/*.wsm")
file(COPY ${seeds} DESTINATION "${WORK_DIR}/corpus")
set(binary "${WORK_DIR}/model_file_fuzz")
execute_process(
  COMMAND "${CLANGXX}" -std=c++17 -O1 -g -fsanitize=fuzzer,address,undefined -fno-sanitize-recover=undefined
          -I "${SOURCE_DIR}/include" -I "${EIGEN_INCLUDE}" -I "${XSIMD_INCLUDE}"
          "${SOURCE_DIR}/tests/fuzz/model_file_fuzz.cpp" -o "${binary}"
  RESULT_VARIABLE built)
if(NOT built EQUAL 0)
  message("the fuzz target did not build with ${CLANGXX} (libFuzzer runtime missing?): fuzzing skipped")
  cmake_language(EXIT 77)
endif()
execute_process(
  COMMAND "${binary}" -max_total_time=${SECONDS} -rss_limit_mb=2048 -timeout=10 -print_final_stats=1
          "${WORK_DIR}/corpus"
  RESULT_VARIABLE fuzzed)
if(NOT fuzzed EQUAL 0)
  message(FATAL_ERROR "the fuzzer found a failure (exit ${fuzzed}); the crashing input is in the working directory")
endif()
