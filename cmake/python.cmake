# The Python module `netfold` (python/), built with pybind11 from Debian's packages.
#
# NETFOLD_BUILD_PYTHON is ON, OFF or AUTO. AUTO (the default) builds the module when netfold is
# the top-level project, is not a sanitizer build (an instrumented extension cannot be loaded by
# an uninstrumented interpreter) and pybind11 and the Python headers are found; otherwise it
# says so and leaves the module and its tests out. ON makes a missing pybind11 an error.
# AUTO is decided afresh at every configure, so installing pybind11 later is picked up.

# Debian's interpreter, not one earlier in PATH (a pyenv shim, say): pybind11, NumPy, pytest
# and Matplotlib come from Debian's packages and are installed for /usr/bin/python3 only.
if(NOT DEFINED Python3_EXECUTABLE AND EXISTS /usr/bin/python3)
  set(Python3_EXECUTABLE /usr/bin/python3 CACHE FILEPATH "Python interpreter of the netfold module and its tests")
endif()

string(TOUPPER "${NETFOLD_BUILD_PYTHON}" _netfold_python)
set(NETFOLD_PYTHON_ENABLED OFF)
if(_netfold_python STREQUAL "AUTO")
  if(PROJECT_IS_TOP_LEVEL AND NOT NETFOLD_SANITIZERS)
    find_package(Python3 3.8 QUIET COMPONENTS Interpreter Development.Module)
    if(Python3_FOUND)
      find_package(pybind11 2.6 CONFIG QUIET)
    endif()
    if(Python3_FOUND AND pybind11_FOUND)
      set(NETFOLD_PYTHON_ENABLED ON)
    else()
      message(STATUS "netfold: pybind11 or the Python headers were not found; the Python module "
                     "and its tests are left out (scripts/bootstrap installs pybind11-dev and python3-dev)")
    endif()
  endif()
elseif(NETFOLD_BUILD_PYTHON)
  find_package(Python3 3.8 REQUIRED COMPONENTS Interpreter Development.Module)
  find_package(pybind11 2.6 CONFIG REQUIRED)
  set(NETFOLD_PYTHON_ENABLED ON)
endif()

if(NETFOLD_PYTHON_ENABLED)
  # Where `cmake --install` puts the module, relative to the prefix: Debian's directory for
  # Python packages of every 3.x version (with the prefix /usr, the package's).
  set(NETFOLD_PYTHON_INSTALL_DIR "lib/python3/dist-packages" CACHE STRING
      "Install folder of the Python module, relative to the install prefix")
  add_subdirectory(python)
endif()
