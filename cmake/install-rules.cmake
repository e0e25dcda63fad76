# Install rules (included from CMakeLists.txt when NETFOLD_INSTALL is ON): the command line,
# the library as the CMake package `netfold` (target netfold::core) and as pkg-config's
# `netfold`, its public headers, the docs, the example circuits and the man page. The layout
# under the prefix (see docs/install.md):
#   bin/netfold
#   include/netfold/*.hpp, lib/libnetfold_core.a
#   lib/cmake/netfold/netfold-config.cmake (+ version, targets), lib/pkgconfig/netfold.pc
#   lib/python3/dist-packages/netfold.*.so   (when the Python module is built)
#   share/man/man1/netfold.1.gz, share/doc/netfold/*.md, share/netfold/examples/
# The examples go under share/netfold rather than share/doc/netfold because they are inputs to
# run, and because minimal Debian images (containers) drop /usr/share/doc when installing.
include(GNUInstallDirs)
include(CMakePackageConfigHelpers)

set(NETFOLD_INSTALL_CMAKEDIR ${CMAKE_INSTALL_LIBDIR}/cmake/netfold)
set(NETFOLD_INSTALL_EXAMPLESDIR ${CMAKE_INSTALL_DATADIR}/netfold/examples)

# --- The library's interface as installed ---------------------------------------------------
# netfold_core is a static library, so its link interface carries its private dependencies as
# $<LINK_ONLY:...> for whoever links it. Some of those are this project's own INTERFACE
# helpers, which are not exported (cmake/warnings.cmake, cmake/dependencies.cmake): in the
# installed interface, a helper is replaced by the libraries it stands for, and a dependency
# that brings no library to link (warnings, a header-only library) is left out. The source
# tree's include folder becomes the installed one. The build tree keeps everything as it was.
# (Eigen must stay a PUBLIC dependency of netfold_core while public headers include it, as
# mna.hpp and reduce.hpp do: as a private one it would be dropped here like any header-only
# library, and a consumer would miss its include folder.)
function(netfold_installed_interface target)
  get_target_property(deps ${target} INTERFACE_LINK_LIBRARIES)
  set(rewritten)
  foreach(dep IN LISTS deps)
    set(helper "")
    if(dep MATCHES "^\\$<LINK_ONLY:([^>$]+)>$")
      set(helper "${CMAKE_MATCH_1}")
    endif()
    if(helper AND TARGET "${helper}")
      get_target_property(type ${helper} TYPE)
      get_target_property(imported ${helper} IMPORTED)
      get_target_property(helper_libs ${helper} INTERFACE_LINK_LIBRARIES)
      if(type STREQUAL "INTERFACE_LIBRARY" AND NOT helper_libs)
        list(APPEND rewritten "$<BUILD_INTERFACE:${dep}>")
      elseif(type STREQUAL "INTERFACE_LIBRARY" AND NOT imported)
        list(APPEND rewritten "$<BUILD_INTERFACE:${dep}>")
        foreach(lib IN LISTS helper_libs)
          list(APPEND rewritten "$<INSTALL_INTERFACE:$<LINK_ONLY:${lib}>>")
        endforeach()
      else()
        list(APPEND rewritten "${dep}")
      endif()
    else()
      list(APPEND rewritten "${dep}")
    endif()
  endforeach()
  get_target_property(includes ${target} INTERFACE_INCLUDE_DIRECTORIES)
  set(installed_includes)
  foreach(dir IN LISTS includes)
    if(dir MATCHES "^\\$<")
      list(APPEND installed_includes "${dir}")
    else()
      list(APPEND installed_includes "$<BUILD_INTERFACE:${dir}>")
    endif()
  endforeach()
  list(APPEND installed_includes "$<INSTALL_INTERFACE:${CMAKE_INSTALL_INCLUDEDIR}>")
  set_target_properties(${target} PROPERTIES
    INTERFACE_LINK_LIBRARIES "${rewritten}"
    INTERFACE_INCLUDE_DIRECTORIES "${installed_includes}"
    EXPORT_NAME core)
endfunction()
netfold_installed_interface(netfold_core)

# --- Targets, headers, CMake package ----------------------------------------------------------
install(TARGETS netfold RUNTIME DESTINATION ${CMAKE_INSTALL_BINDIR} COMPONENT runtime)
install(TARGETS netfold_core EXPORT netfold-targets
        ARCHIVE DESTINATION ${CMAKE_INSTALL_LIBDIR} COMPONENT development)
install(DIRECTORY ${PROJECT_SOURCE_DIR}/include/netfold DESTINATION ${CMAKE_INSTALL_INCLUDEDIR}
        COMPONENT development FILES_MATCHING PATTERN "*.hpp")
install(EXPORT netfold-targets NAMESPACE netfold:: FILE netfold-targets.cmake
        DESTINATION ${NETFOLD_INSTALL_CMAKEDIR} COMPONENT development)
configure_package_config_file(${PROJECT_SOURCE_DIR}/cmake/netfold-config.cmake.in
                              ${PROJECT_BINARY_DIR}/netfold-config.cmake
                              INSTALL_DESTINATION ${NETFOLD_INSTALL_CMAKEDIR})
# 0.x: a new minor version may change the API, so only the same minor version matches.
write_basic_package_version_file(${PROJECT_BINARY_DIR}/netfold-config-version.cmake
                                 COMPATIBILITY SameMinorVersion)
install(FILES ${PROJECT_BINARY_DIR}/netfold-config.cmake ${PROJECT_BINARY_DIR}/netfold-config-version.cmake
        DESTINATION ${NETFOLD_INSTALL_CMAKEDIR} COMPONENT development)

# --- pkg-config -------------------------------------------------------------------------------
# The prefix is found from the .pc file's own folder, so the file holds wherever the tree is
# installed (a temporary prefix, or /usr from the Debian package).
file(RELATIVE_PATH NETFOLD_PC_TO_PREFIX
     ${CMAKE_INSTALL_PREFIX}/${CMAKE_INSTALL_LIBDIR}/pkgconfig ${CMAKE_INSTALL_PREFIX})
string(REGEX REPLACE "/$" "" NETFOLD_PC_TO_PREFIX "${NETFOLD_PC_TO_PREFIX}")
configure_file(${PROJECT_SOURCE_DIR}/cmake/netfold.pc.in ${PROJECT_BINARY_DIR}/netfold.pc @ONLY)
install(FILES ${PROJECT_BINARY_DIR}/netfold.pc DESTINATION ${CMAKE_INSTALL_LIBDIR}/pkgconfig COMPONENT development)

# --- Documentation, examples, man page -------------------------------------------------------
file(GLOB NETFOLD_DOC_FILES CONFIGURE_DEPENDS ${PROJECT_SOURCE_DIR}/docs/*.md)
install(FILES ${PROJECT_SOURCE_DIR}/README.md ${NETFOLD_DOC_FILES}
        DESTINATION ${CMAKE_INSTALL_DOCDIR} COMPONENT runtime)
install(DIRECTORY ${PROJECT_SOURCE_DIR}/netlists/ DESTINATION ${NETFOLD_INSTALL_EXAMPLESDIR} COMPONENT runtime)
install(PROGRAMS ${PROJECT_SOURCE_DIR}/examples/sweep_component.py
        DESTINATION ${NETFOLD_INSTALL_EXAMPLESDIR} COMPONENT runtime)
# Debian keeps manual pages compressed (gzip -9n: no name or time stamp, so the bytes repeat).
add_custom_command(OUTPUT ${PROJECT_BINARY_DIR}/netfold.1.gz
                   COMMAND gzip -9n -c ${PROJECT_SOURCE_DIR}/docs/netfold.1 > ${PROJECT_BINARY_DIR}/netfold.1.gz
                   DEPENDS ${PROJECT_SOURCE_DIR}/docs/netfold.1)
add_custom_target(netfold_man ALL DEPENDS ${PROJECT_BINARY_DIR}/netfold.1.gz)
install(FILES ${PROJECT_BINARY_DIR}/netfold.1.gz DESTINATION ${CMAKE_INSTALL_MANDIR}/man1 COMPONENT runtime)

include(${CMAKE_CURRENT_LIST_DIR}/packaging.cmake)
