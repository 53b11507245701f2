"""Fails when README.md's table of cell functions differs from the one generated from the add-in's
declarative table (office-addin/src/table.cpp): the README is the user's reference, so it must say
exactly what the add-in offers.

  check_readme_table.py build/default/office-addin/generated/cell-functions.md README.md [--write]

--write replaces the README's table by the generated one."""

import sys

BEGIN, END = "<!-- cell-functions:begin -->", "<!-- cell-functions:end -->"

generated = open(sys.argv[1], encoding="utf-8").read().strip()
readme = open(sys.argv[2], encoding="utf-8").read()
if BEGIN not in readme or END not in readme:
    sys.exit(f"README.md lacks the markers {BEGIN} ... {END}")
head, rest = readme.split(BEGIN, 1)
embedded, tail = rest.split(END, 1)
if "--write" in sys.argv[3:]:
    with open(sys.argv[2], "w", encoding="utf-8") as f:
        f.write(head + BEGIN + "\n" + generated + "\n" + END + tail)
    print("README table rewritten")
elif embedded.strip() != generated:
    sys.exit("README.md's table of cell functions differs from the add-in's table; run\n"
             "  /usr/bin/python3 tests/office/check_readme_table.py " + " ".join(sys.argv[1:3]) + " --write")
else:
    print("README table matches the add-in's table")
