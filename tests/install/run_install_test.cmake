# Builds and runs tests/install/host_project the two ways a user consumes wavestack.
#
#   MODE=install           cmake --install the wavestack build tree into a scratch
#                          prefix, then find_package(wavestack) from that prefix.
#   MODE=add_subdirectory  the host pulls the wavestack source tree in directly.
#
# Run by ctest (see tests/CMakeLists.txt):
#   cmake -DMODE=... -DWAVESTACK_SOURCE_DIR=... -DWAVESTACK_BUILD_DIR=... -DWORK_DIR=...
#         [-DCONFIG=Release] [-DGENERATOR=...] [-DCXX_COMPILER=...] -P run_install_test.cmake
cmake_minimum_required(VERSION 3.16)

foreach(required MODE WAVESTACK_SOURCE_DIR WAVESTACK_BUILD_DIR WORK_DIR)
  if(NOT DEFINED ${required})
    message(FATAL_ERROR "run_install_test.cmake: -D${required}=... is required")
  endif()
endforeach()
if(NOT CONFIG)
  set(CONFIG Release)
endif()

# Run a command; any failure fails the test.
function(run)
  execute_process(COMMAND ${ARGN} RESULT_VARIABLE result)
  if(NOT result EQUAL 0)
    string(REPLACE ";" " " pretty "${ARGN}")
    message(FATAL_ERROR "Command failed (${result}): ${pretty}")
  endif()
endfunction()

set(host_source "${CMAKE_CURRENT_LIST_DIR}/host_project")
set(host_build "${WORK_DIR}/host_build_${MODE}")
set(prefix "${WORK_DIR}/prefix")
# Start from scratch: a stale cache could hide a broken package.
file(REMOVE_RECURSE "${host_build}")

set(configure_args -S "${host_source}" -B "${host_build}" "-DCMAKE_BUILD_TYPE=${CONFIG}")
if(GENERATOR)
  list(APPEND configure_args -G "${GENERATOR}")
endif()
if(CXX_COMPILER)
  list(APPEND configure_args "-DCMAKE_CXX_COMPILER=${CXX_COMPILER}")
endif()

if(MODE STREQUAL "install")
  file(REMOVE_RECURSE "${prefix}")
  run("${CMAKE_COMMAND}" --install "${WAVESTACK_BUILD_DIR}" --prefix "${prefix}" --config "${CONFIG}")
  # Only our scratch prefix may satisfy find_package, never a copy installed elsewhere.
  list(APPEND configure_args "-DCMAKE_PREFIX_PATH=${prefix}"
       -DCMAKE_FIND_PACKAGE_NO_PACKAGE_REGISTRY=ON)
elseif(MODE STREQUAL "add_subdirectory")
  list(APPEND configure_args "-DWAVESTACK_SOURCE_DIR=${WAVESTACK_SOURCE_DIR}")
else()
  message(FATAL_ERROR "run_install_test.cmake: unknown MODE '${MODE}'")
endif()

run("${CMAKE_COMMAND}" ${configure_args})

if(MODE STREQUAL "install")
  file(STRINGS "${host_build}/CMakeCache.txt" found_dir REGEX "^wavestack_DIR:")
  string(REGEX REPLACE "^wavestack_DIR:[A-Z]+=" "" found_dir "${found_dir}")
  string(FIND "${found_dir}" "${prefix}/" position)
  if(NOT position EQUAL 0)
    message(FATAL_ERROR "find_package found wavestack in '${found_dir}', not in '${prefix}'")
  endif()
endif()

run("${CMAKE_COMMAND}" --build "${host_build}" --config "${CONFIG}")

# Single-config generators put the executable at the top; multi-config ones in <CONFIG>/.
foreach(candidate "${host_build}/wavestack_host" "${host_build}/${CONFIG}/wavestack_host"
                  "${host_build}/wavestack_host.exe" "${host_build}/${CONFIG}/wavestack_host.exe")
  if(EXISTS "${candidate}")
    run("${candidate}")
    message(STATUS "wavestack ${MODE} test passed")
    return()
  endif()
endforeach()
message(FATAL_ERROR "wavestack_host executable not found under ${host_build}")
