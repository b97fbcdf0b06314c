# Warnings for our own targets only, applied privately.
function(nvsyn_warnings target)
  target_compile_options(${target} PRIVATE -Wall -Wextra -Wpedantic -Wshadow -Wconversion -Wno-sign-conversion)
  if(NVSYN_WARNINGS_AS_ERRORS)
    target_compile_options(${target} PRIVATE -Werror)
  endif()
endfunction()

# nvsyn_module(name SOURCES a.cpp ... DEPENDS other targets)
# One static library per module of DESIGN.md; DEPENDS states what it may use.
function(nvsyn_module name)
  cmake_parse_arguments(ARG "" "" "SOURCES;DEPENDS" ${ARGN})
  add_library(nvsyn_${name} STATIC ${ARG_SOURCES})
  target_include_directories(nvsyn_${name} PUBLIC ${PROJECT_SOURCE_DIR}/src)
  target_link_libraries(nvsyn_${name} PUBLIC ${ARG_DEPENDS})
  set_target_properties(nvsyn_${name} PROPERTIES POSITION_INDEPENDENT_CODE ON)
  nvsyn_warnings(nvsyn_${name})
endfunction()

# nvsyn_test(name SOURCES ... ) : a Catch2 test executable registered with CTest.
function(nvsyn_test name)
  cmake_parse_arguments(ARG "" "" "SOURCES;DEPENDS" ${ARGN})
  add_executable(${name} ${ARG_SOURCES})
  target_link_libraries(${name} PRIVATE nvsyn_test_main ${ARG_DEPENDS})
  nvsyn_warnings(${name})
  add_test(NAME ${name} COMMAND ${name} WORKING_DIRECTORY ${CMAKE_CURRENT_BINARY_DIR})
endfunction()
