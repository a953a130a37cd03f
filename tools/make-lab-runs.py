#!/usr/bin/env python3
"""Regenerates cases/selective-hydrogenation-lab-runs.csv: INVENTED lab data.

The lab case with invented "true" kinetics (semi: A 0.25 mol/(kg*s*bar^2),
Ea 40 kJ/mol; over: A 5.0e-5 mol/(kg*s*bar^2), Ea 60 kJ/mol; T_ref 330 K)
is run by `rxtrain sweep` over 4 temperatures x 5 catalyst loadings x 2
hydrogen contents; normal noise (SD 0.01 on X and on the ethylene yield,
seed 2026) is added. Usage: tools/make-lab-runs.py TRUE_SWEEP.csv > OUT.csv
"""
import csv
import random
import sys

rows = [r for r in csv.reader(l for l in open(sys.argv[1]) if not l.startswith('#'))]
head, data = rows[0], rows[1:]
col = {n: i for i, n in enumerate(head)}
rng = random.Random(2026)
out = sys.stdout
out.write("# INVENTED lab data for the acetylene-removal catalyst (rxtrain demo): generated\n"
          "# by tools/make-lab-runs.py from invented 'true' kinetics with normal noise of SD\n"
          "# 0.01 on X and on the ethylene yield. Not measurements of any real catalyst.\n")
out.write("feed.T,train.L1.catalyst,feed.composition.H2,X,L1.yield.C2H4\n")
out.write("degC,g,-,-,-\n")
for r in data:
    T = float(r[col['feed.T']]) - 273.15
    W = float(r[col['train.L1.catalyst']]) * 1000
    h2 = float(r[col['feed.composition.H2']])
    X = float(r[col['X']]) + rng.gauss(0, 0.01)
    Y = float(r[col['L1.yield.C2H4']]) + rng.gauss(0, 0.01)
    out.write(f"{T:.1f},{W:.4g},{h2:.4g},{X:.4f},{Y:.4f}\n")
