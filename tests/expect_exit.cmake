# Runs CMD with ARGS and fails unless it exits with EXPECT (ctest alone only sees zero/non-zero,
# and PASS_REGULAR_EXPRESSION ignores the exit code altogether). Optional checks:
#   MATCH  a regular expression the combined stdout and stderr must contain;
#   FILES  files that must exist afterwards and be non-empty (they are deleted first, so a
#          file left by an earlier run cannot pass for this one's).
if(FILES)
  foreach(f IN LISTS FILES)
    file(REMOVE "${f}")
  endforeach()
endif()
execute_process(COMMAND ${CMD} ${ARGS} RESULT_VARIABLE code OUTPUT_VARIABLE out ERROR_VARIABLE err)
if(NOT code EQUAL EXPECT)
  message(FATAL_ERROR "expected exit code ${EXPECT}, got ${code}\n${out}\n${err}")
endif()
if(NOT "${MATCH}" STREQUAL "" AND NOT "${out}${err}" MATCHES "${MATCH}")
  message(FATAL_ERROR "exit code ${code} as expected, but the output lacks /${MATCH}/\n${out}\n${err}")
endif()
foreach(f IN LISTS FILES)
  if(NOT EXISTS "${f}")
    message(FATAL_ERROR "expected output file ${f} was not written\n${out}\n${err}")
  endif()
  file(SIZE "${f}" size)
  if(size EQUAL 0)
    message(FATAL_ERROR "output file ${f} is empty")
  endif()
endforeach()
message("exit code ${code} as expected\n${out}\n${err}")
