# Every dependency comes from Debian's packages (scripts/bootstrap installs them).
find_package(Eigen3 3.4 REQUIRED NO_MODULE)
find_package(fmt REQUIRED)
find_package(nlohmann_json 3 REQUIRED)
find_package(CLI11 REQUIRED)
find_package(SUNDIALS 6 REQUIRED)

add_library(netfold_sundials INTERFACE)
target_link_libraries(netfold_sundials INTERFACE
  SUNDIALS::cvode_shared SUNDIALS::nvecserial_shared
  SUNDIALS::sunlinsolklu_shared SUNDIALS::sunmatrixsparse_shared)

# SuiteSparse 5 ships no CMake package on Debian: find the libraries by hand.
find_path(SUITESPARSE_INCLUDE_DIR klu.h PATH_SUFFIXES suitesparse REQUIRED)
foreach(lib klu cholmod amd colamd camd ccolamd btf suitesparseconfig)
  find_library(SUITESPARSE_${lib}_LIBRARY ${lib} REQUIRED)
  list(APPEND SUITESPARSE_LIBRARIES ${SUITESPARSE_${lib}_LIBRARY})
endforeach()
add_library(netfold_suitesparse INTERFACE)
target_include_directories(netfold_suitesparse INTERFACE ${SUITESPARSE_INCLUDE_DIR})
target_link_libraries(netfold_suitesparse INTERFACE ${SUITESPARSE_LIBRARIES})
