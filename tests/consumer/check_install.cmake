# Installs the built tree into a scratch prefix, then configures, builds and runs a tiny
# outside project that does find_package(coilkick CONFIG REQUIRED).
file(REMOVE_RECURSE ${WORK_DIR})
execute_process(COMMAND ${CMAKE_COMMAND} --install ${BUILD_DIR} --prefix ${WORK_DIR}/prefix
                RESULT_VARIABLE rc OUTPUT_QUIET)
if(rc)
  message(FATAL_ERROR "install failed")
endif()
execute_process(COMMAND ${CMAKE_COMMAND} -S ${SOURCE_DIR}/tests/consumer -B ${WORK_DIR}/build
                        -DCMAKE_PREFIX_PATH=${WORK_DIR}/prefix -DCMAKE_BUILD_TYPE=Release
                RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err)
if(rc)
  message(FATAL_ERROR "consumer configure failed:\n${out}\n${err}")
endif()
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
