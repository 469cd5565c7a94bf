#!/usr/bin/env python3
"""The 3-hour 1 Hz FIT file of `cargo bench --bench ingest`, decoded by Python's fitdecode
(an independent, general-purpose FIT reader), against splitdesk's whole ingest of the same
bytes as criterion measured it.

Run `cargo bench --bench ingest` first (it writes target/bench-fit_3h_1hz.fit and its
estimates), then: `python3 benches/fitdecode_ratio.py` (needs `pip install fitdecode`;
`.venv/bin/python` from `.ci/run` has it).
"""
import json
import pathlib
import statistics
import sys
import time

ROOT = pathlib.Path(__file__).resolve().parent.parent
FIT = ROOT / "target" / "bench-fit_3h_1hz.fit"
OURS = ROOT / "target" / "criterion" / "fit_3h_1hz" / "splitdesk_ingest_bytes" / "new" / "estimates.json"
BARE = ROOT / "target" / "criterion" / "fit_3h_1hz" / "fitparser_from_bytes" / "new" / "estimates.json"


def decode(path):
    import fitdecode

    records = 0
    with fitdecode.FitReader(str(path)) as fit:
        for frame in fit:
            if isinstance(frame, fitdecode.FitDataMessage) and frame.name == "record":
                records += 1
    return records


def median_ms(estimates):
    return json.loads(estimates.read_text())["median"]["point_estimate"] / 1e6


def main():
    if not FIT.exists() or not OURS.exists():
        sys.exit("run `cargo bench --bench ingest` first")
    try:
        import fitdecode  # noqa: F401
    except ImportError:
        sys.exit("fitdecode is not installed (pip install fitdecode)")
    runs = []
    records = 0
    for _ in range(7):
        t0 = time.perf_counter()
        records = decode(FIT)
        runs.append((time.perf_counter() - t0) * 1000.0)
    py = statistics.median(runs)
    ours = median_ms(OURS)
    print(f"records in the file: {records}")
    print(f"fitdecode decode (Python), median of 7: {py:.1f} ms")
    print(f"splitdesk ingest (decode + derive + clean), criterion median: {ours:.1f} ms")
    print(f"ratio splitdesk / fitdecode: {ours / py:.3f}")
    if BARE.exists():
        bare = median_ms(BARE)
        print(f"fitparser bare decode, criterion median: {bare:.1f} ms (ratio splitdesk / fitparser {ours / bare:.2f})")


if __name__ == "__main__":
    main()
