"""Compare two runs' result files field by field: every value in the first must be in the second, at the
same place and equal (new fields in the second are listed, not compared).

    python3 scripts/compare_results.py BEFORE_DIR AFTER_DIR [--ignore provenance,caution,...]

Used to show that a restructuring left the demo's numbers unchanged. Exit code 1 on any difference.
"""
import argparse
import glob
import json
import math
import os
import sys


def leaves(value, path=()):
    if isinstance(value, dict):
        for key, item in value.items():
            yield from leaves(item, path + (key,))
    elif isinstance(value, list):
        for index, item in enumerate(value):
            yield from leaves(item, path + (index,))
    else:
        yield path, value


def lookup(value, path):
    for key in path:
        if isinstance(value, dict) and key in value:
            value = value[key]
        elif isinstance(value, list) and isinstance(key, int) and key < len(value):
            value = value[key]
        else:
            raise KeyError(path)
    return value


def same(a, b) -> bool:
    if isinstance(a, float) and isinstance(b, float) and math.isnan(a) and math.isnan(b):
        return True
    return a == b and type(a) is type(b) or (isinstance(a, (int, float)) and isinstance(b, (int, float)) and a == b
                                                and not isinstance(a, bool) and not isinstance(b, bool))


def main(argv=None) -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("before")
    parser.add_argument("after")
    parser.add_argument("--ignore", default="provenance", help="comma-separated top-level fields not compared")
    parser.add_argument("--files", default="events/*/evidence.json,catalog/catalog.json")
    args = parser.parse_args(argv)
    ignored = set(args.ignore.split(","))
    differences = compared = numbers = 0
    for pattern in args.files.split(","):
        for old_path in sorted(glob.glob(os.path.join(args.before, pattern))):
            new_path = os.path.join(args.after, os.path.relpath(old_path, args.before))
            old, new = json.load(open(old_path)), json.load(open(new_path))
            added = sorted(set(new) - set(old))
            for path, value in leaves(old):
                if path and path[0] in ignored:
                    continue
                compared += 1
                numbers += isinstance(value, (int, float)) and not isinstance(value, bool)
                try:
                    other = lookup(new, path)
                except KeyError:
                    print(f"{new_path}: {'/'.join(map(str, path))} missing")
                    differences += 1
                    continue
                if not same(value, other):
                    differences += 1
                    print(f"{new_path}: {'/'.join(map(str, path))}: {value!r} -> {other!r}")
            print(f"{os.path.relpath(new_path, args.after)}: compared; new fields {added}")
    print(f"{compared} values compared ({numbers} numbers), {differences} differ")
    return 1 if differences else 0


if __name__ == "__main__":
    sys.exit(main())
