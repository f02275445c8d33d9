"""Source of the test files: ecCodes' own encoder and samples (the reference tool).
Writes GRIB2 test files with ecCodes (python3-eccodes) for the reference tests.
Reads a JSON spec on stdin:
  {"files": [{"out": PATH, "messages": [{"sample": "regular_ll_pl_grib2", "keys": [[KEY, VALUE], ...],
                              "values": [...] | null, "missing": NUMBER | null}]}, ...]}
Keys are set in the order given (ecCodes needs grid before product before packing).
Prints one line per message: the packingType ecCodes reports after writing."""
import json
import sys

import eccodes
import numpy as np



def set_key(h, key, value):
    if isinstance(value, dict):  # {"double": x}: JSON cannot tell 60 from 60.0
        eccodes.codes_set_double(h, key, float(value["double"]))
    elif isinstance(value, float):
        eccodes.codes_set_double(h, key, value)
    elif isinstance(value, int):
        eccodes.codes_set_long(h, key, value)
    else:
        eccodes.codes_set_string(h, key, value)


def write_file(spec):
    with open(spec["out"], "wb") as out:
        for m in spec["messages"]:
            h = eccodes.codes_grib_new_from_samples(m.get("sample", "regular_ll_pl_grib2"))
            for key, value in m["keys"]:
                set_key(h, key, value)
            vals = np.array(m["values"], dtype=np.float64)
            if m.get("missing") is not None:
                eccodes.codes_set(h, "bitmapPresent", 1)
                eccodes.codes_set_double(h, "missingValue", float(m["missing"]))
            eccodes.codes_set_values(h, vals)
            # packing keys go after the grid is final; the values are then set again so that
            # ecCodes encodes them directly in the requested packing
            for key, value in m.get("after", []):
                set_key(h, key, value)
            if m.get("after"):
                eccodes.codes_set_values(h, vals)
            eccodes.codes_write(h, out)
            print(eccodes.codes_get_string(h, "packingType"))
            eccodes.codes_release(h)


spec = json.load(sys.stdin)
for one in spec.get("files", [spec]):
    try:
        write_file(one)
    except Exception as err:  # report and go on: one packing this build cannot write must not hide the others
        print("FAILED", type(err).__name__, err)
