# One line per test file.
allocsim_unit_test(csv allocsim::core)
allocsim_unit_test(entropic_transport allocsim::analysis)
allocsim_unit_test(exact_transport allocsim::analysis)
allocsim_reference_test(exact_vs_linprog exact_vs_linprog.py)
allocsim_unit_test(binarize allocsim::analysis)
allocsim_unit_test(nestedness allocsim::analysis)
allocsim_unit_test(rankings allocsim::analysis)
allocsim_unit_test(null_models allocsim::analysis)
