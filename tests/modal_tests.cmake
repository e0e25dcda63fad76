# The modal closed form against SciPy (tests/scipy_modal_check.py): a test-only driver reads a
# state equation as JSON and prints the states; the script compares them with expm and Radau.
# It exits 77, a skip, where SciPy is absent. Included from tests/CMakeLists.txt.
add_executable(modal_probe modal_probe.cpp)
target_link_libraries(modal_probe PRIVATE netfold_core netfold_warnings nlohmann_json::nlohmann_json fmt::fmt)
target_include_directories(modal_probe PRIVATE ${PROJECT_SOURCE_DIR}/src)
add_test(NAME scipy_modal_check
         COMMAND /usr/bin/python3 ${PROJECT_SOURCE_DIR}/tests/scipy_modal_check.py $<TARGET_FILE:modal_probe>)
set_tests_properties(scipy_modal_check PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 600 LABELS "scipy;response")
