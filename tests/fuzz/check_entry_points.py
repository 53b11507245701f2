"""check_entry_points.py HEADER TARGET: fails when a function declared in the C header (LODE_API) is
never called by the fuzz target, so a new entry point cannot be left unfuzzed."""

import re
import sys

header, target = (open(p, encoding="utf-8").read() for p in sys.argv[1:3])
declared = sorted(set(re.findall(r"LODE_API[^;(]*?\b(lode_\w+)\s*\(", header)))
missing = [name for name in declared if not re.search(rf"\b{name}\s*\(", target)]
if not declared:
    sys.exit("no LODE_API function found in the header")
if missing:
    sys.exit("the fuzz target never calls: " + ", ".join(missing))
print(f"the fuzz target calls all {len(declared)} entry points")
