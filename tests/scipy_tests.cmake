# The outside-reference check: netfold's closed form against SciPy's Radau on hand-derived
# state equations (tests/scipy_crosscheck.py). It exits 77, a skip, where SciPy is absent.
# Included from tests/CMakeLists.txt.
add_test(NAME scipy_crosscheck
         COMMAND /usr/bin/python3 ${PROJECT_SOURCE_DIR}/tests/scipy_crosscheck.py $<TARGET_FILE:netfold>)
set_tests_properties(scipy_crosscheck PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 600 LABELS "scipy;verify")
