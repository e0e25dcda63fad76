# CPack: `cpack -G DEB` in the build folder makes netfold_<version>_<arch>.deb, one package
# with everything `cmake --install` puts in place, under /usr. Its Depends come from
# dpkg-shlibdeps (package dpkg-dev), which reads the libraries the binaries link.
# Included from cmake/install-rules.cmake.
set(NETFOLD_PACKAGE_MAINTAINER "netfold maintainers <maintainers@netfold.example>" CACHE STRING
    "Maintainer field of the Debian package")

set(CPACK_PACKAGE_NAME netfold)
set(CPACK_PACKAGE_VENDOR "netfold")
set(CPACK_PACKAGE_VERSION ${PROJECT_VERSION})
set(CPACK_PACKAGE_DESCRIPTION_SUMMARY "exact switching transients of circuits with one capacitor or inductor")
set(CPACK_PACKAGE_CONTACT "${NETFOLD_PACKAGE_MAINTAINER}")
set(CPACK_GENERATOR DEB)
set(CPACK_STRIP_FILES ON)
# The package is never relocated: /usr, where Python, pkg-config and CMake look.
set(CPACK_PACKAGING_INSTALL_PREFIX /usr)

set(CPACK_DEBIAN_FILE_NAME DEB-DEFAULT)
set(CPACK_DEBIAN_PACKAGE_MAINTAINER "${NETFOLD_PACKAGE_MAINTAINER}")
set(CPACK_DEBIAN_PACKAGE_SECTION electronics)
set(CPACK_DEBIAN_PACKAGE_PRIORITY optional)
set(CPACK_DEBIAN_PACKAGE_SHLIBDEPS ON)
set(CPACK_DEBIAN_PACKAGE_CONTROL_STRICT_PERMISSION ON)
# The extended description; CPack puts the summary above it, indents each line and turns the
# empty line into the paragraph mark " ." (Debian policy 5.6.13).
set(CPACK_PACKAGE_DESCRIPTION "netfold reads a circuit with one capacitor or inductor in its own text format
(.nf), reduces it to the Thevenin and Norton equivalent the storage element sees
between switching events, and writes the exact closed-form response of every
voltage and current. It finds worst cases over the closing angle, the residual
state and the closing time, rates stress against the parts' ratings, and
cross-checks every answer against a numerical integration (SUNDIALS CVODE).
Files with claims are a regression suite for a circuit library in CI.

This package holds the netfold command, its manual page, the example circuits,
the C++ library with its headers, CMake package and pkg-config file, and the
Python module 'netfold'.")
if(NETFOLD_PYTHON_ENABLED)
  # The module is built for this interpreter's minor version; NumPy carries its waveforms.
  math(EXPR next_minor "${Python3_VERSION_MINOR} + 1")
  set(CPACK_DEBIAN_PACKAGE_RECOMMENDS
      "python3 (>= ${Python3_VERSION_MAJOR}.${Python3_VERSION_MINOR}), python3 (<< ${Python3_VERSION_MAJOR}.${next_minor}), python3-numpy")
endif()
# What a C++ program built against the library needs besides this package, and what the
# Python example draws with.
set(CPACK_DEBIAN_PACKAGE_SUGGESTS "libeigen3-dev, libfmt-dev, libsundials-dev, libsuitesparse-dev, python3-matplotlib")

include(CPack)
