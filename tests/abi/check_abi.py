#!/usr/bin/python3
"""ABI snapshot check of liblode with abigail-tools (abidw, abidiff).

  check_abi.py check   SNAPSHOT LIBRARY HEADERS   fail on any ABI change not in the snapshot
  check_abi.py refresh SNAPSHOT LIBRARY HEADERS   rewrite the snapshot from the built library
  check_abi.py selftest SNAPSHOT                  the checker catches a removed function

`check` fails on an incompatible change (abidiff exit bit 8: a function removed, a struct or
parameter changed) unless the SONAME, which carries LODE_ABI_VERSION_MAJOR, differs from the
snapshot's; it also fails on a compatible change (bit 4, e.g. a new function) so the snapshot never
falls behind the library: then refresh it and commit it with the change.
"""

import os
import re
import subprocess
import sys
import tempfile

ABIDIFF_ABI_CHANGE = 4
ABIDIFF_INCOMPATIBLE = 8
SUPPRESSIONS = os.path.join(os.path.dirname(os.path.abspath(__file__)), "appended_fields.suppr")


def dump(library, headers, out):
    subprocess.run(["abidw", "--headers-dir", headers, "--exported-interfaces-only", "--no-corpus-path",
                    "--no-comp-dir-path", "--no-show-locs", "--drop-private-types", "--type-id-style", "hash",
                    "--out-file", out, library], check=True)
    with open(out) as f:
        text = f.read()
    # Translation-unit paths become relative to the source tree (no machine paths in the snapshot).
    text = re.sub(r"path='[^']*?/(capi/src/[^']*)'", r"path='\1'", text)
    with open(out, "w") as f:
        f.write(text)


def soname(path):
    with open(path) as f:
        m = re.search(r"soname='([^']*)'", f.read())
    return m.group(1) if m else None


def compare(snapshot, fresh):
    """Returns (exit code of this check, report)."""
    proc = subprocess.run(["abidiff", "--suppressions", SUPPRESSIONS, snapshot, fresh], capture_output=True, text=True)
    report = proc.stdout + proc.stderr
    if proc.returncode & 3:
        return 2, "abidiff failed:\n" + report
    old, new = soname(snapshot), soname(fresh)
    # abidiff sets bit 8 only for removed symbols; a changed function or variable (a parameter or a
    # struct it reaches changed in a way other than appending fields) is as incompatible for Lode.
    counts = re.findall(r"(?:Functions|Variables) changes summary: (\d+) Removed, (\d+) Changed", report)
    changed = any(int(x) > 0 for pair in counts for x in pair)
    if proc.returncode & ABIDIFF_INCOMPATIBLE or changed:
        if old != new:
            return 0, (f"incompatible ABI change with the major version bumped ({old} -> {new}): accepted; refresh the "
                       f"snapshot.\n{report}")
        return 1, (f"INCOMPATIBLE ABI change while the SONAME is still {new}. Either keep the old functions and "
                   "structs as they were (see DEVELOPERS.md, 'The C ABI'), or bump LODE_ABI_VERSION_MAJOR in "
                   f"capi/include/lode.h and refresh the snapshot.\n{report}")
    if proc.returncode & ABIDIFF_ABI_CHANGE:
        return 1, ("compatible ABI change not recorded in the snapshot: refresh it (tests/abi/check_abi.py refresh ..., "
                   f"see DEVELOPERS.md) and commit it with the change.\n{report}")
    return 0, "ABI unchanged"


def main(argv):
    mode = argv[1]
    if mode == "selftest":
        snapshot = argv[2]
        with tempfile.TemporaryDirectory() as d:
            broken = os.path.join(d, "broken.abi")
            with open(snapshot) as f:
                text = f.read()
            # Remove one exported function (its ELF symbol and its declaration): an incompatible change.
            name = re.search(r"<elf-symbol name='(lode_[a-z_]+)'", text).group(1)
            text = re.sub(rf"\s*<elf-symbol name='{name}'[^>]*/>", "", text)
            text = re.sub(rf"\s*<function-decl name='{name}'.*?</function-decl>", "", text, flags=re.S)
            with open(broken, "w") as f:
                f.write(text)
            code, report = compare(snapshot, broken)
            if code != 1 or "INCOMPATIBLE" not in report:
                print(f"the check did not catch the removal of {name}:\n{report}")
                return 1
            print(f"removing {name} is caught as incompatible")
            code, report = compare(snapshot, snapshot)
            if code != 0:
                print(f"an unchanged ABI is reported as changed:\n{report}")
                return 1
            return 0
    snapshot, library, headers = argv[2], argv[3], argv[4]
    if mode == "refresh":
        dump(library, headers, snapshot)
        print(f"wrote {snapshot} ({soname(snapshot)})")
        return 0
    with tempfile.TemporaryDirectory() as d:
        fresh = os.path.join(d, "fresh.abi")
        dump(library, headers, fresh)
        code, report = compare(snapshot, fresh)
        print(report)
        return code


if __name__ == "__main__":
    sys.exit(main(sys.argv))
