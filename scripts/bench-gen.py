#!/usr/bin/env python3
"""Synthetic worksheet for the end-to-end benchmarks (scripts/bench-e2e,
scripts/bench-growth): inputs with units, arithmetic chains, checks,
headings, descriptions. Usage: bench-gen.py N FILE (seeded: the same N
gives the same file)."""
import sys, random
n, path = int(sys.argv[1]), sys.argv[2]
random.seed(7)
units = [("m", "m"), ("kg", "kg"), ("s", "s"), ("kPa", "kPa"), ("K", "K")]
out = ["# Synthetic worksheet for the end-to-end benchmark", ""]
names = []
for i in range(n):
    if i % 500 == 0:
        out.append(f"## Block {i // 500}")
    if i < 20 or i % 50 == 0:
        u = units[i % len(units)][0]
        out.append(f"input x{i} = {random.uniform(1, 9):.3f} {u}  \"input {i}\"")
        names.append((f"x{i}", u))
    elif i % 97 == 0 and names:
        a, u = random.choice(names)
        out.append(f"check {a} > 0 {u}  \"positive\"")
    else:
        a, ua = random.choice(names[-40:])
        b, ub = random.choice([x for x in names[-40:] if x[1] == ua] or [(a, ua)])
        op = random.choice(["+", "-"])
        out.append(f"y{i} = ({a} {op} {b}) * 0.5  \"value {i}\"")
        names.append((f"y{i}", ua))
open(path, "w").write("\n".join(out) + "\n")
