# The generator module must be built before the tests that load it through SoapySDR.
add_dependencies(soapy_source_test hetbench_gen)
add_dependencies(pipeline_test hetbench_gen)

# SoapyRemote: stream from the generator through a SoapySDRServer on loopback (tests/remote_test.sh).
add_test(NAME SoapyRemote.GeneratorOverLoopback
         COMMAND bash ${CMAKE_CURRENT_SOURCE_DIR}/remote_test.sh ${PROJECT_BINARY_DIR} $<TARGET_FILE:soapy_source_test>)
set_tests_properties(SoapyRemote.GeneratorOverLoopback PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 120)
add_dependencies(demo_sets_test hetbench_gen)
