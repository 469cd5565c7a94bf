#!/usr/bin/env python3
"""Weighted kappa by scikit-learn (PyPI), an independent computation for tests/agreement_sklearn.rs.

Reads a JSON list of {"a": [...], "b": [...], "weights": "quadratic" | "linear" | null} on
stdin and prints a JSON list of kappas (null where scikit-learn gives no number). Exits with
status 3 when scikit-learn is not installed, so the test can skip with a message.
"""
import json
import math
import sys
import warnings

try:
    from sklearn.metrics import cohen_kappa_score
except ImportError:
    sys.exit(3)

out = []
for case in json.load(sys.stdin):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        k = cohen_kappa_score(case["a"], case["b"], labels=[1, 2, 3, 4, 5], weights=case["weights"])
    k = float(k)
    out.append(None if math.isnan(k) else k)
print(json.dumps(out))
