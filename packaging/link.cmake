# The packaged liblode (LODE_PACKAGE=ON) carries its C++ runtime: it exports only C symbols, so the
# copy of libstdc++/libgcc linked into it stays private (hidden, and on Linux local through the
# version script) and a user's machine needs nothing but its C library.
if(WIN32)
  # lode.dll (no "lib" prefix), import library liblode.dll.a, and lode.def for MSVC's lib.exe;
  # -static links libstdc++, libgcc and winpthread into the DLL.
  set_target_properties(lode PROPERTIES PREFIX "")
  target_link_options(lode PRIVATE -static -Wl,--output-def,${PROJECT_BINARY_DIR}/capi/lode.def)
  install(FILES ${PROJECT_BINARY_DIR}/capi/lode.def DESTINATION ${CMAKE_INSTALL_LIBDIR} COMPONENT capi)
else()
  target_link_options(lode PRIVATE -static-libstdc++ -static-libgcc)
endif()

# dist/ (target lode_dist, ./lode package) and the tests of what it holds (label package, and
# package_windows for the part that runs under wine). Only in the Linux package build, which also
# builds the Windows tree (build/windows, configured by `cmake --preset windows`) before writing dist/.
if(NOT WIN32 AND NOT CMAKE_CROSSCOMPILING)
  set(LODE_WINDOWS_BUILD ${PROJECT_SOURCE_DIR}/build/windows CACHE PATH "The Windows cross build (preset windows)")
  set(LODE_DIST ${PROJECT_SOURCE_DIR}/dist CACHE PATH "Where lode_dist writes the artefacts")
  get_property(LODE_DIST_OXT GLOBAL PROPERTY LODE_OXT)
  if(NOT LODE_DIST_OXT)
    message(FATAL_ERROR "LODE_PACKAGE needs the Calc extension (LODE_BUILD_ADDIN=ON)")
  endif()
  add_custom_target(lode_dist
    COMMAND ${CMAKE_COMMAND} --build ${LODE_WINDOWS_BUILD} --target lode
    COMMAND /usr/bin/python3 ${PROJECT_SOURCE_DIR}/packaging/make_dist.py --version ${PROJECT_VERSION}
            --cmake ${CMAKE_COMMAND} --linux-build ${PROJECT_BINARY_DIR} --windows-build ${LODE_WINDOWS_BUILD}
            --oxt ${LODE_DIST_OXT} --soname $<TARGET_SONAME_FILE_NAME:lode>
            --python ${PROJECT_SOURCE_DIR}/capi/python --out ${LODE_DIST}
    DEPENDS lode lode_oxt
    COMMENT "Writing dist/ (version ${PROJECT_VERSION})"
    VERBATIM)
  enable_testing()
  add_subdirectory(${PROJECT_SOURCE_DIR}/tests/package ${PROJECT_BINARY_DIR}/tests/package)
endif()
