# Runs CMD with ARGS and fails unless it exits with EXPECT (ctest only checks zero/non-zero).
execute_process(COMMAND ${CMD} ${ARGS} RESULT_VARIABLE code OUTPUT_VARIABLE out ERROR_VARIABLE err)
if(NOT code EQUAL EXPECT)
  message(FATAL_ERROR "expected exit code ${EXPECT}, got ${code}\n${out}\n${err}")
endif()
message("exit code ${code} as expected\n${err}")
