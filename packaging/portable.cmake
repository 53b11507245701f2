# fmt header-only for the packaged builds (LODE_PACKAGE=ON): the shipped liblode then needs no
# libfmt.so at run time. Debian's libfmt-dev headers are copied into the build tree so that a cross
# compiler (mingw-w64) sees fmt alone and not the rest of the host's /usr/include.
find_path(LODE_FMT_HEADERS fmt/format.h PATHS /usr/include NO_CMAKE_FIND_ROOT_PATH NO_DEFAULT_PATH)
if(NOT LODE_FMT_HEADERS)
  message(FATAL_ERROR "fmt's headers (fmt/format.h) were not found: install libfmt-dev")
endif()
set(LODE_FMT_COPY ${CMAKE_BINARY_DIR}/fmt-headers)
file(COPY ${LODE_FMT_HEADERS}/fmt DESTINATION ${LODE_FMT_COPY})
add_library(lode_fmt_header_only INTERFACE)
target_include_directories(lode_fmt_header_only SYSTEM INTERFACE ${LODE_FMT_COPY})
target_compile_definitions(lode_fmt_header_only INTERFACE FMT_HEADER_ONLY=1)
add_library(fmt::fmt ALIAS lode_fmt_header_only)

# mingw-w64's GCC keeps the stack 16-byte aligned on Windows, yet spills 32-byte AVX values with
# aligned moves (GCC bug 54412); the run-time AVX2 kernels of the core would then crash. The
# assembler turns every aligned vector move into an unaligned one (binutils 2.38+).
if(WIN32 AND CMAKE_CXX_COMPILER_ID STREQUAL "GNU")
  add_compile_options(-Wa,-muse-unaligned-vector-move)
endif()

# Boost.Math is header-only too (core/src/distributions.cpp). A cross compiler must not see the host's
# whole /usr/include, so the cross build finds Boost through a folder that holds only a link to the
# host's boost/ headers.
if(CMAKE_CROSSCOMPILING)
  find_path(LODE_BOOST_HEADERS boost/version.hpp PATHS /usr/include NO_CMAKE_FIND_ROOT_PATH NO_DEFAULT_PATH)
  if(NOT LODE_BOOST_HEADERS)
    message(FATAL_ERROR "Boost's headers (boost/version.hpp) were not found: install libboost-math-dev")
  endif()
  set(LODE_BOOST_LINK ${CMAKE_BINARY_DIR}/boost-headers)
  file(MAKE_DIRECTORY ${LODE_BOOST_LINK})
  file(CREATE_LINK ${LODE_BOOST_HEADERS}/boost ${LODE_BOOST_LINK}/boost SYMBOLIC)
  set(Boost_INCLUDE_DIR ${LODE_BOOST_LINK} CACHE PATH "Boost's headers for the cross build" FORCE)
  set(Boost_NO_BOOST_CMAKE ON)
endif()
