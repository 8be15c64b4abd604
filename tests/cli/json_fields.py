#!/usr/bin/env python3
"""Prints chosen fields of the JSON document on stdin, one `path: value` line each, numbers
rounded to 9 significant digits, so expected-output cases do not depend on the last bits of
a double. A path is keys and list indexes joined by dots: `top_drift.0.symbol`.

usage: codedrift inspect ... --json | json_fields.py PATH...
"""

import json
import sys


def show(value):
    if isinstance(value, bool) or value is None:
        return json.dumps(value)
    if isinstance(value, float):
        return format(value, ".9g")
    if isinstance(value, (int, str)):
        return json.dumps(value)
    return json.dumps(value, sort_keys=True)


def main():
    document = json.load(sys.stdin)
    for path in sys.argv[1:]:
        value = document
        for part in path.split("."):
            if isinstance(value, list):
                value = value[int(part)]
            elif part in value:
                value = value[part]
            else:
                print(f"{path}: (missing)")
                break
        else:
            if isinstance(value, dict):
                inner = ", ".join(f"{json.dumps(k)}: {show(v)}" for k, v in value.items())
                print(f"{path}: {{{inner}}}")
            else:
                print(f"{path}: {show(value)}")


if __name__ == "__main__":
    main()
