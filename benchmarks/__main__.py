"""Run every benchmark module: ``python -m benchmarks [name ...]``.

Timings are printed as ratios or medians measured in this one run, so a noisy shared
machine moves numerator and denominator together.
"""

import importlib
import pkgutil
import sys

import benchmarks


def main(argv):
    names = sorted(m.name for m in pkgutil.iter_modules(benchmarks.__path__)
                   if m.name.startswith("bench_"))
    wanted = [n if n.startswith("bench_") else f"bench_{n}" for n in argv] or names
    for name in wanted:
        module = importlib.import_module(f"benchmarks.{name}")
        print(f"== {name}")
        module.run()
        print()
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
