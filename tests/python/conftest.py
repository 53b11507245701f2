import os
import sys

# The suite imports the binding from the source tree and the test helpers from this folder; ctest
# sets LODE_LIBRARY to the freshly built liblode. With LODE_PYTHON_INSTALLED set it tests the
# installed package instead (tests/package/check_wheel.py: the wheel in a fresh environment).
if not os.environ.get("LODE_PYTHON_INSTALLED"):
    sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "..", "capi", "python"))
sys.path.insert(0, os.path.dirname(__file__))
sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "support"))  # bounds.py
