# The outside-reference check: netfold's closed form against SciPy's Radau on hand-derived
# state equations (tests/scipy_crosscheck.py). It exits 77, a skip, where SciPy is absent.
# Included from tests/CMakeLists.txt.
add_test(NAME scipy_crosscheck
         COMMAND /usr/bin/python3 ${PROJECT_SOURCE_DIR}/tests/scipy_crosscheck.py $<TARGET_FILE:netfold>)
set_tests_properties(scipy_crosscheck PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 600 LABELS "scipy;verify")

# Every figure of every .nf file in the repository against the dump recorded before the stage
# rework (tests/figures_baseline.py): 1e-12 relative, changes on purpose listed in the script.
add_test(NAME figures_baseline
         COMMAND /usr/bin/python3 ${PROJECT_SOURCE_DIR}/tests/figures_baseline.py compare
                 $<TARGET_FILE:netfold> ${PROJECT_SOURCE_DIR})
set_tests_properties(figures_baseline PROPERTIES TIMEOUT 600 LABELS "baseline")

# The peak's distribution over a random closing angle (exact and Monte Carlo) against a dense
# evaluation of the closed form of a series RC and the same seeded samples computed in Python
# (tests/scipy_rc_closing.py). It exits 77, a skip, where SciPy is absent.
add_test(NAME scipy_rc_closing
         COMMAND /usr/bin/python3 ${PROJECT_SOURCE_DIR}/tests/scipy_rc_closing.py $<TARGET_FILE:netfold>)
set_tests_properties(scipy_rc_closing PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 600 LABELS "scipy;worst")

# Diode handling against SciPy's Radau with event functions on hand-derived state equations of
# a half-wave rectifier switched on from empty, a bridge closed at the crest and a half-wave in
# its periodic steady state: event instants, diode states, waveforms, peaks, and the textbook
# first-pulse current, ripple and conduction angle (tests/scipy_rectifier.py). It exits 77, a
# skip, where SciPy is absent.
add_test(NAME scipy_rectifier
         COMMAND /usr/bin/python3 ${PROJECT_SOURCE_DIR}/tests/scipy_rectifier.py $<TARGET_FILE:netfold>)
set_tests_properties(scipy_rectifier PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 600 LABELS "scipy;diode")
