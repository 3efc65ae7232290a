# The two-command workflow for wavestack, runnable from any directory:
#
#   cmake -P cmake/workflow.cmake demo   install missing packages, build and run the demo
#   cmake -P cmake/workflow.cmake test   install missing packages, build everything, run ctest
#
# Both use the build directory <repo>/build. Any failing step stops with a non-zero exit.
cmake_minimum_required(VERSION 3.16)

# ===========================================================================
# Debian packages each mode needs. Extend these lists when a new dependency
# appears; nothing else in this script has to change.
# ===========================================================================
set(WAVESTACK_PACKAGES_COMMON g++ cmake make libeigen3-dev libxsimd-dev libcli11-dev libfmt-dev)
set(WAVESTACK_PACKAGES_DEMO)
set(WAVESTACK_PACKAGES_TEST doctest-dev libbenchmark-dev clang libclang-rt-14-dev python3)
# ===========================================================================

set(parallel_jobs 2)
set(test_timeout 600)  # seconds, per ctest test

get_filename_component(repo_dir "${CMAKE_CURRENT_LIST_DIR}/.." ABSOLUTE)
set(build_dir "${repo_dir}/build")

# ---- Arguments: cmake -P <script> <mode> puts <mode> in CMAKE_ARGV3. --------
set(usage "Usage: cmake -P cmake/workflow.cmake <demo|test>
  demo   install missing Debian packages, build and run examples/heat_treatment_demo
  test   install missing Debian packages, build everything, run all tests")
if(CMAKE_ARGC GREATER 3)
  set(mode "${CMAKE_ARGV3}")
else()
  set(mode "")
endif()
if(mode STREQUAL "demo")
  set(packages ${WAVESTACK_PACKAGES_COMMON} ${WAVESTACK_PACKAGES_DEMO})
elseif(mode STREQUAL "test")
  set(packages ${WAVESTACK_PACKAGES_COMMON} ${WAVESTACK_PACKAGES_TEST})
else()
  if(mode STREQUAL "")
    message(FATAL_ERROR "No mode given.\n${usage}")
  endif()
  message(FATAL_ERROR "Unknown mode '${mode}'.\n${usage}")
endif()

string(TIMESTAMP start_time "%s")

# Run one step, echoing it; a failure ends the workflow with a non-zero exit.
function(run_step description)
  cmake_parse_arguments(PARSE_ARGV 1 step "" "WORKING_DIRECTORY" "COMMAND")
  if(NOT step_WORKING_DIRECTORY)
    set(step_WORKING_DIRECTORY "${repo_dir}")
  endif()
  message(STATUS "==> ${description}")
  execute_process(COMMAND ${step_COMMAND}
                  WORKING_DIRECTORY "${step_WORKING_DIRECTORY}"
                  COMMAND_ECHO STDOUT
                  RESULT_VARIABLE result)
  if(NOT result EQUAL 0)
    message(FATAL_ERROR "Step failed (${result}): ${description}")
  endif()
endfunction()

# ---- Step 1: Debian packages ----------------------------------------------
find_program(DPKG_QUERY dpkg-query)
if(NOT DPKG_QUERY)
  string(REPLACE ";" " " package_text "${packages}")
  message(WARNING "dpkg-query not found: not a Debian-like system, so packages are not "
                  "checked. Make sure the equivalents of these are installed: ${package_text}")
else()
  set(missing "")
  foreach(package IN LISTS packages)
    execute_process(COMMAND "${DPKG_QUERY}" -W "-f=\${Status}" "${package}"
                    OUTPUT_VARIABLE status ERROR_QUIET RESULT_VARIABLE result)
    if(NOT result EQUAL 0 OR NOT status MATCHES "install ok installed")
      list(APPEND missing "${package}")
    endif()
  endforeach()

  if(missing)
    string(REPLACE ";" " " missing_text "${missing}")
    set(install_command "apt-get install -y --no-install-recommends ${missing_text}")
    execute_process(COMMAND id -u OUTPUT_VARIABLE user_id OUTPUT_STRIP_TRAILING_WHITESPACE)
    find_program(APT_GET apt-get)
    if(user_id STREQUAL "0" AND APT_GET)
      message(STATUS "Missing Debian packages: ${missing_text}")
      set(ENV{DEBIAN_FRONTEND} noninteractive)
      run_step("apt-get update" COMMAND "${APT_GET}" update)
      run_step("install ${missing_text}"
               COMMAND "${APT_GET}" install -y --no-install-recommends ${missing})
    else()
      message(FATAL_ERROR "Missing Debian packages: ${missing_text}\n"
                          "Install them (as root) and run this again:\n"
                          "  sudo apt-get update && sudo ${install_command}")
    endif()
  else()
    message(STATUS "All required Debian packages are installed")
  endif()
endif()

# ---- Step 2: configure, build, run -----------------------------------------
if(mode STREQUAL "demo")
  run_step("configure ${build_dir}"
           COMMAND "${CMAKE_COMMAND}" -S "${repo_dir}" -B "${build_dir}"
                   -DCMAKE_BUILD_TYPE=Release
                   -DWAVESTACK_BUILD_EXAMPLES=ON
                   -DWAVESTACK_BUILD_TESTS=OFF
                   -DWAVESTACK_BUILD_BENCHMARKS=OFF)
  run_step("build heat_treatment_demo"
           COMMAND "${CMAKE_COMMAND}" --build "${build_dir}" --config Release
                   --target heat_treatment_demo --parallel ${parallel_jobs})

  # Single-config generators put it in examples/, multi-config ones in examples/Release/.
  set(demo "")
  foreach(candidate "${build_dir}/examples/heat_treatment_demo"
                    "${build_dir}/examples/Release/heat_treatment_demo"
                    "${build_dir}/examples/Release/heat_treatment_demo.exe")
    if(NOT demo AND EXISTS "${candidate}")
      set(demo "${candidate}")
    endif()
  endforeach()
  if(NOT demo)
    message(FATAL_ERROR "heat_treatment_demo was built but not found under ${build_dir}/examples")
  endif()
  # Run from the repo root; the demo prints where it wrote its outputs.
  run_step("run heat_treatment_demo (in ${repo_dir})" COMMAND "${demo}")

elseif(mode STREQUAL "test")
  run_step("configure ${build_dir}"
           COMMAND "${CMAKE_COMMAND}" -S "${repo_dir}" -B "${build_dir}"
                   -DCMAKE_BUILD_TYPE=Release
                   -DWAVESTACK_BUILD_EXAMPLES=ON
                   -DWAVESTACK_BUILD_TESTS=ON
                   -DWAVESTACK_BUILD_BENCHMARKS=ON)
  run_step("build all"
           COMMAND "${CMAKE_COMMAND}" --build "${build_dir}" --config Release
                   --parallel ${parallel_jobs})
  run_step("run tests"
           COMMAND "${CMAKE_CTEST_COMMAND}" --output-on-failure -C Release
                   --parallel ${parallel_jobs} --timeout ${test_timeout}
           WORKING_DIRECTORY "${build_dir}")
endif()

string(TIMESTAMP end_time "%s")
math(EXPR elapsed "${end_time} - ${start_time}")
message(STATUS "wavestack ${mode}: done in ${elapsed} s")
