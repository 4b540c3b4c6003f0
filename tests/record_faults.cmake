# The fault tests record from the generator module through SoapySDR: it must be built first.
add_dependencies(record_faults_test hetbench_gen)
