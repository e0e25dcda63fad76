# End-to-end runs of the real binary (STYLE: CTest checks exit status and an output regex).

# Every example circuit solves and reports its segments.
file(GLOB NETFOLD_EXAMPLES CONFIGURE_DEPENDS ${PROJECT_SOURCE_DIR}/netlists/*.nf)
foreach(nf ${NETFOLD_EXAMPLES})
  get_filename_component(name ${nf} NAME_WE)
  add_test(NAME cli_solve_${name} COMMAND netfold solve ${nf} --no-verify)
  set_tests_properties(cli_solve_${name} PROPERTIES PASS_REGULAR_EXPRESSION "segment 1: .*observable")
endforeach()

# Every file of the error gallery is refused with a positioned message and exit status 2.
file(GLOB NETFOLD_BAD CONFIGURE_DEPENDS ${PROJECT_SOURCE_DIR}/netlists/bad/*.nf)
foreach(nf ${NETFOLD_BAD})
  get_filename_component(name ${nf} NAME_WE)
  add_test(NAME cli_bad_${name} COMMAND ${CMAKE_COMMAND} -DBIN=$<TARGET_FILE:netfold> -DFILE=${nf}
           -P ${PROJECT_SOURCE_DIR}/tests/expect_exit.cmake)
endforeach()

add_test(NAME cli_version COMMAND netfold --version)
set_tests_properties(cli_version PROPERTIES PASS_REGULAR_EXPRESSION "^netfold [0-9]+\\.[0-9]+")
add_test(NAME cli_help COMMAND netfold --help)
set_tests_properties(cli_help PROPERTIES PASS_REGULAR_EXPRESSION "solve.*equiv.*worst.*verify.*check")
add_test(NAME cli_explain COMMAND netfold solve ${PROJECT_SOURCE_DIR}/netlists/valve_coil.nf --no-verify --explain)
set_tests_properties(cli_explain PROPERTIES PASS_REGULAR_EXPRESSION "derivation.*τ = L/R_th = 120 mH / 18 Ω = 6.667 ms")
add_test(NAME cli_equiv COMMAND netfold equiv ${PROJECT_SOURCE_DIR}/netlists/valve_coil.nf --at 40ms)
set_tests_properties(cli_equiv PROPERTIES PASS_REGULAR_EXPRESSION "R_th = 488 Ω")
add_test(NAME cli_worst COMMAND netfold worst ${PROJECT_SOURCE_DIR}/netlists/valve_coil.nf)
set_tests_properties(cli_worst PROPERTIES PASS_REGULAR_EXPRESSION "sweep supply.phase .*coil_l.i")
add_test(NAME cli_unknown_option COMMAND ${CMAKE_COMMAND} -DBIN=$<TARGET_FILE:netfold> -DARGS=solve\\;--nonsense\\;x.nf
         -DEXPECT=2 -P ${PROJECT_SOURCE_DIR}/tests/expect_exit.cmake)

# Issue 12, messages: a port at an unknown node names the file's reference node.
add_test(NAME cli_equiv_unknown_port_node COMMAND ${CMAKE_COMMAND} -DBIN=$<TARGET_FILE:netfold>
         -DARGS=equiv\\;${PROJECT_SOURCE_DIR}/netlists/valve_coil.nf\\;--port\\;gnd,a -DEXPECT=2
         "-DMESSAGE=unknown node 'gnd'; this file's reference node is 'n' \\('ground n' at line 4\\)"
         -P ${PROJECT_SOURCE_DIR}/tests/expect_exit.cmake)

# Issue 16: the peak's distribution with seeded samples, and the picture of a sweep.
add_test(NAME cli_worst_samples COMMAND netfold worst ${PROJECT_SOURCE_DIR}/netlists/valve_coil.nf --samples 500 --seed 3 --json -)
set_tests_properties(cli_worst_samples PROPERTIES PASS_REGULAR_EXPRESSION "\"p99_ci\".*\"samples\": 500.*\"seed\": 3")
add_test(NAME cli_worst_svg COMMAND netfold worst ${PROJECT_SOURCE_DIR}/netlists/valve_coil.nf --svg -)
set_tests_properties(cli_worst_svg PROPERTIES PASS_REGULAR_EXPRESSION "<svg.*coil_l.i peak.*supply.phase \\(°\\)")
add_test(NAME cli_worst_seed_needs_samples COMMAND ${CMAKE_COMMAND} -DBIN=$<TARGET_FILE:netfold>
         -DARGS=worst\\;${PROJECT_SOURCE_DIR}/netlists/valve_coil.nf\\;--seed\\;4 -DEXPECT=2
         -P ${PROJECT_SOURCE_DIR}/tests/expect_exit.cmake)
