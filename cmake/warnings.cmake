# Warnings for the project's own targets only; not exported.
add_library(netfold_warnings INTERFACE)
target_compile_options(netfold_warnings INTERFACE -Wall -Wextra -Wpedantic -Wshadow)
if(NETFOLD_WERROR)
  target_compile_options(netfold_warnings INTERFACE -Werror)
endif()
