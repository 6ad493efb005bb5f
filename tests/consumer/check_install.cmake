# Installs the built tree into a scratch prefix, then configures, builds and runs a tiny
# outside project that does find_package(coilkick CONFIG REQUIRED).
file(REMOVE_RECURSE ${WORK_DIR})
execute_process(COMMAND ${CMAKE_COMMAND} --install ${BUILD_DIR} --prefix ${WORK_DIR}/prefix
                RESULT_VARIABLE rc OUTPUT_QUIET)
if(rc)
  message(FATAL_ERROR "install failed")
endif()
# The project's own major.minor is found (the package carries a version file)...
file(READ ${SOURCE_DIR}/CMakeLists.txt project_text)
string(REGEX MATCH "project\\(coilkick VERSION ([0-9]+)\\.([0-9]+)" _ "${project_text}")
set(major ${CMAKE_MATCH_1})
set(minor ${CMAKE_MATCH_2})
math(EXPR newer_minor "${minor} + 1")
execute_process(COMMAND ${CMAKE_COMMAND} -S ${SOURCE_DIR}/tests/consumer -B ${WORK_DIR}/build
                        -DCMAKE_PREFIX_PATH=${WORK_DIR}/prefix -DCMAKE_BUILD_TYPE=Release
                        -DCOILKICK_REQUEST_VERSION=${major}.${minor}
                RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err)
if(rc)
  message(FATAL_ERROR "consumer configure failed:\n${out}\n${err}")
endif()
# ... and a request for a newer minor version is refused (SameMinorVersion compatibility).
execute_process(COMMAND ${CMAKE_COMMAND} -S ${SOURCE_DIR}/tests/consumer -B ${WORK_DIR}/too_new
                        -DCMAKE_PREFIX_PATH=${WORK_DIR}/prefix -DCOILKICK_REQUEST_VERSION=${major}.${newer_minor}
                RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err)
if(NOT rc OR NOT err MATCHES "version")
  message(FATAL_ERROR "find_package(coilkick ${major}.${newer_minor}) should have failed:\n${out}\n${err}")
endif()
message("version ${major}.${minor} found, ${major}.${newer_minor} refused")
execute_process(COMMAND ${CMAKE_COMMAND} --build ${WORK_DIR}/build
                RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err)
if(rc)
  message(FATAL_ERROR "consumer build failed:\n${out}\n${err}")
endif()
execute_process(COMMAND ${WORK_DIR}/build/consumer RESULT_VARIABLE rc OUTPUT_VARIABLE out)
if(rc)
  message(FATAL_ERROR "consumer run failed: ${out}")
endif()
message("${out}")

# The Python package installed into the same prefix imports and runs.
if(PYTHON)
  file(GLOB_RECURSE core ${WORK_DIR}/prefix/*/_core*.so)
  if(NOT core)
    message(FATAL_ERROR "the Python module was not installed")
  endif()
  get_filename_component(pkg ${core} DIRECTORY)
  get_filename_component(site ${pkg} DIRECTORY)
  execute_process(COMMAND ${PYTHON} -c "import sys; sys.path.insert(0, '${site}'); import coilkick; print('python package ok', len(coilkick.part_names()))"
                  RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err)
  if(rc)
    message(FATAL_ERROR "installed Python package does not import:\n${out}\n${err}")
  endif()
  message("${out}")
endif()
