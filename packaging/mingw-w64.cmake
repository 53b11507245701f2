# Toolchain of the Windows cross build (CMake preset `windows`): Debian's mingw-w64 with the POSIX
# thread model (g++-mingw-w64-x86-64-posix; std::thread needs it with GCC 12).
set(CMAKE_SYSTEM_NAME Windows)
set(CMAKE_SYSTEM_PROCESSOR x86_64)
set(CMAKE_C_COMPILER x86_64-w64-mingw32-gcc-posix)
set(CMAKE_CXX_COMPILER x86_64-w64-mingw32-g++-posix)
set(CMAKE_RC_COMPILER x86_64-w64-mingw32-windres)
set(CMAKE_FIND_ROOT_PATH /usr/x86_64-w64-mingw32)
set(CMAKE_FIND_ROOT_PATH_MODE_PROGRAM NEVER)
set(CMAKE_FIND_ROOT_PATH_MODE_LIBRARY ONLY)
set(CMAKE_FIND_ROOT_PATH_MODE_INCLUDE ONLY)
# Eigen is header-only: its CMake package in the host's /usr/share/eigen3 is usable as it is.
set(CMAKE_FIND_ROOT_PATH_MODE_PACKAGE BOTH)
