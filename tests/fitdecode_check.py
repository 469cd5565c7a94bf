#!/usr/bin/env python3
"""Read a FIT file with fitdecode (PyPI), an independent FIT decoder, and print JSON.

Usage: fitdecode_check.py FILE

Output: {"records": [...], "laps": [...], "events": [...], "sport": ...}. Timestamps are
Unix seconds (UTC); positions are degrees (semicircles * 180 / 2**31); cadence is FIT's
strides/min plus fractional_cadence. Missing values are null. CRCs are checked (errors
raise). Only the fields splitdesk reads and writes are reported.
"""
import datetime
import json
import sys

import fitdecode

SEMI = 180.0 / 2**31


def unix(v):
    if isinstance(v, datetime.datetime):
        return int(v.timestamp())
    return None


def val(msg, name):
    if not msg.has_field(name):
        return None
    return msg.get_value(name, fallback=None)


def main(path):
    out = {"records": [], "laps": [], "events": [], "sport": None}
    with fitdecode.FitReader(
        path,
        check_crc=fitdecode.CrcCheck.RAISE,
        error_handling=fitdecode.ErrorHandling.RAISE,
    ) as fit:
        for frame in fit:
            if frame.frame_type != fitdecode.FIT_FRAME_DATA:
                continue
            name = frame.name
            if name == "record":
                lat, lon = val(frame, "position_lat"), val(frame, "position_long")
                cad, frac = val(frame, "cadence"), val(frame, "fractional_cadence")
                out["records"].append({
                    "timestamp": unix(val(frame, "timestamp")),
                    "lat": None if lat is None else lat * SEMI,
                    "lon": None if lon is None else lon * SEMI,
                    "distance": val(frame, "distance"),
                    "enhanced_speed": val(frame, "enhanced_speed"),
                    # 16-bit speed, or the speed component of compressed_speed_distance.
                    "speed": val(frame, "speed"),
                    "heart_rate": val(frame, "heart_rate"),
                    "cadence": None if cad is None else cad + (frac or 0.0),
                    "enhanced_altitude": val(frame, "enhanced_altitude"),
                })
            elif name == "lap":
                out["laps"].append({
                    "start_time": unix(val(frame, "start_time")),
                    "timestamp": unix(val(frame, "timestamp")),
                    "total_elapsed_time": val(frame, "total_elapsed_time"),
                    "total_timer_time": val(frame, "total_timer_time"),
                    "total_distance": val(frame, "total_distance"),
                    "lap_trigger": val(frame, "lap_trigger"),
                })
            elif name == "event":
                out["events"].append({
                    "timestamp": unix(val(frame, "timestamp")),
                    "event": val(frame, "event"),
                    "event_type": val(frame, "event_type"),
                })
            elif name == "session":
                out["sport"] = val(frame, "sport")
    json.dump(out, sys.stdout)
    sys.stdout.write("\n")


if __name__ == "__main__":
    if len(sys.argv) != 2:
        sys.exit("usage: fitdecode_check.py FILE")
    main(sys.argv[1])
