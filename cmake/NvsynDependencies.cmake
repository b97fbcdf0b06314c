# Every dependency is a Debian 12 package. A missing one stops configuration
# with the name of the package that provides it.
function(nvsyn_require found_var what package)
  if(NOT ${found_var})
    message(FATAL_ERROR
      "nvsyn needs ${what}, which was not found.\n"
      "On Debian 12 install it with:  apt-get install -y ${package}")
  endif()
endfunction()

# Threads of the event loop (kernel/worker_team.hpp).
find_package(Threads REQUIRED)

find_package(Boost 1.74 QUIET)
nvsyn_require(Boost_FOUND "Boost (Odeint headers) >= 1.74" libboost-dev)

find_package(Eigen3 3.4 QUIET NO_MODULE)
nvsyn_require(Eigen3_FOUND "Eigen >= 3.4" libeigen3-dev)

find_package(HDF5 QUIET COMPONENTS C)
nvsyn_require(HDF5_FOUND "the HDF5 C library" libhdf5-dev)

find_package(tomlplusplus 3 QUIET)
nvsyn_require(tomlplusplus_FOUND "toml++ >= 3" libtomlplusplus-dev)

find_package(CLI11 QUIET)
nvsyn_require(CLI11_FOUND "CLI11" libcli11-dev)

find_package(fmt 9 QUIET)
nvsyn_require(fmt_FOUND "{fmt} >= 9" libfmt-dev)

find_path(RANDOM123_INCLUDE_DIR Random123/philox.h)
if(RANDOM123_INCLUDE_DIR)
  set(RANDOM123_FOUND TRUE)
endif()
nvsyn_require(RANDOM123_FOUND "Random123 (Philox headers)" librandom123-dev)
add_library(nvsyn_random123 INTERFACE)
target_include_directories(nvsyn_random123 SYSTEM INTERFACE ${RANDOM123_INCLUDE_DIR})

if(NVSYN_BUILD_TESTS)
  find_package(Catch2 2 QUIET)
  nvsyn_require(Catch2_FOUND "Catch2 version 2" catch2)
endif()
