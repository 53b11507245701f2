# cmake -DREADME=... -DMARKER=... -DOUT=... -P extract_example.cmake
# Copies the fenced code block that follows the line "<!-- MARKER -->" in README.md to OUT, so the
# README's examples are compiled and run by the tests and cannot rot.
file(READ ${README} text)
string(FIND "${text}" "<!-- ${MARKER} -->" at)
if(at EQUAL -1)
  message(FATAL_ERROR "README.md has no <!-- ${MARKER} --> block")
endif()
string(SUBSTRING "${text}" ${at} -1 rest)
string(FIND "${rest}" "```" open)
string(SUBSTRING "${rest}" ${open} -1 rest)
string(FIND "${rest}" "\n" eol)
math(EXPR start "${eol} + 1")
string(SUBSTRING "${rest}" ${start} -1 rest)
string(FIND "${rest}" "```" close)
string(SUBSTRING "${rest}" 0 ${close} code)
file(WRITE ${OUT}.tmp "${code}")
file(COPY_FILE ${OUT}.tmp ${OUT} ONLY_IF_DIFFERENT)
