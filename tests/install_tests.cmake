# The install tree, the Debian package and the manual page, checked by ctest without touching
# the system: install to a temporary prefix and use it (tests/install/check_install.sh), build
# the .deb and check it unpacked (tests/install/check_package.sh). Installing the package for
# real (apt-get) is .ci/run's job. Included from tests/CMakeLists.txt.

# The manual page documents every subcommand and option the command has.
add_test(NAME man_page COMMAND /usr/bin/python3 ${PROJECT_SOURCE_DIR}/tests/install/check_man_page.py
                               $<TARGET_FILE:netfold> ${PROJECT_SOURCE_DIR}/docs/netfold.1)
set_tests_properties(man_page PROPERTIES LABELS "install")

# A sanitizer build's library needs the sanitizer runtime in whatever links it: not a library
# to install or package, so its tests are left out there.
if(NETFOLD_INSTALL AND NOT NETFOLD_SANITIZERS)
  set(python_built $<IF:$<TARGET_EXISTS:netfold_python>,1,0>)
  set(python_exe ${Python3_EXECUTABLE})
  if(NOT python_exe)
    set(python_exe /usr/bin/python3)
  endif()
  add_test(NAME install_consumer
           COMMAND bash ${PROJECT_SOURCE_DIR}/tests/install/check_install.sh ${PROJECT_BINARY_DIR} ${PROJECT_SOURCE_DIR}
                   ${PROJECT_BINARY_DIR}/install-test ${PROJECT_VERSION} ${python_built} ${python_exe}
                   "${CMAKE_CXX_COMPILER_LAUNCHER}")
  add_test(NAME package_deb
           COMMAND bash ${PROJECT_SOURCE_DIR}/tests/install/check_package.sh ${PROJECT_BINARY_DIR}
                   ${PROJECT_BINARY_DIR}/package-test ${PROJECT_VERSION} ${python_built} ${python_exe})
  # Both read the whole build tree; one at a time keeps them off each other's toes and the
  # machine's two cores free for the rest of the suite.
  set_tests_properties(install_consumer package_deb PROPERTIES RESOURCE_LOCK netfold_build_tree TIMEOUT 900
                       LABELS "install")
endif()
