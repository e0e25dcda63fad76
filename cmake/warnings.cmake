# Warnings for the project's own targets only; not exported.
add_library(netfold_warnings INTERFACE)
target_compile_options(netfold_warnings INTERFACE -Wall -Wextra -Wpedantic -Wshadow -Wconversion)
# g++ 12 reports -Wrestrict on plain std::string concatenation inlined at -O2 (GCC bug
# 105329, a false positive in libstdc++'s basic_string::_M_replace); it would make every
# `a + b` of strings an error under -Werror, so it is off for g++ 12 only.
if(CMAKE_CXX_COMPILER_ID STREQUAL "GNU" AND CMAKE_CXX_COMPILER_VERSION VERSION_GREATER_EQUAL 12 AND CMAKE_CXX_COMPILER_VERSION VERSION_LESS 13)
  target_compile_options(netfold_warnings INTERFACE -Wno-restrict)
endif()
if(NETFOLD_WERROR)
  target_compile_options(netfold_warnings INTERFACE -Werror)
endif()
