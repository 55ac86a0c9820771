"""JSON output shared by the reference scripts.

Floats are written by repr, the shortest text that reads back as the same
float64, so the Go tests see exactly the values the libraries computed.
Lists of numbers are kept on one line for readability.
"""

import json
import re

_NUMLIST = re.compile(r"\[\s*((?:-?[0-9.eE+-]+|null)(?:,\s*(?:-?[0-9.eE+-]+|null))*)\s*\]")


def dump(obj, path):
    text = json.dumps(obj, indent=1, allow_nan=False)
    text = _NUMLIST.sub(lambda m: "[" + ", ".join(re.split(r",\s*", m.group(1))) + "]", text)
    with open(path, "w") as fh:
        fh.write(text + "\n")
