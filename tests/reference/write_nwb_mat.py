"""Writes one invented recording as NWB 2.x, as a MATLAB 7.3 MAT-file and as CSV text with h5py and
Python's csv module (writers independent of rastrum's C++ code), then checks that rastrum gives
identical `direct` and `stiminfo` results from every format and that `convert` brings each back
to the native layout unchanged.

The NWB files follow the NWB 2.7.0 format specification directly: the root attributes nwb_version,
neurodata_type = "NWBFile", namespace and object_id; the required root datasets and groups; a Units
table (DynamicTable: colnames, description, id; spike_times with its VectorIndex spike_times_index of
exclusive end offsets, whose attribute target references spike_times; every typed object carrying
neurodata_type, namespace and object_id) and a TimeIntervals table of trials with a label column.
The MAT-files follow MATLAB's v7.3 storage as summarised in the shared formats notes (section 7):
a 512-byte user block starting "MATLAB 7.3 MAT-file", one root dataset per variable with its
MATLAB_class as a fixed-length ASCII attribute, column-major shapes, cells as object references
into /#refs#, char as uint16 with MATLAB_int_decode = 2, empty arrays flagged MATLAB_empty. Unlike
the C++ writer (tests/recording_writers.cpp) these use column vectors, the narrowest index type
HDMF would choose, a .specloc reference and MATLAB's canonical empty /#refs#/a.

Usage: write_nwb_mat.py --run RASTRUM WORKDIR
"""
import csv
import json
import os
import subprocess
import sys
import uuid

import h5py
import numpy as np

NWB_VERSION = "2.7.0"


def read_native(path):
    """The recording in rastrum's native layout, read by h5py: units in rastrum's natural order."""
    with h5py.File(path, "r") as f:
        units = [(name, f["units"][name]["spike_times"][()].astype(np.float64)) for name in f["units"]]
        start = f["trials/start_time"][()]
        stop = f["trials/stop_time"][()]
        labels = None
        if "stimulus" in f["trials"]:
            labels = [s.decode("utf-8") if isinstance(s, bytes) else s for s in f["trials/stimulus"][()]]
    # HDF5 lists names in byte order; rastrum orders ids naturally (u2 before u10).
    def natural(name):
        import re
        return [int(p) if p.isdigit() else p for p in re.split(r"(\d+)", name)]
    units.sort(key=lambda u: natural(u[0]))
    return units, start, stop, labels


# ---- NWB 2.7.0 -------------------------------------------------------------------------------

def typed(obj, neurodata_type, namespace):
    obj.attrs["neurodata_type"] = neurodata_type
    obj.attrs["namespace"] = namespace
    obj.attrs["object_id"] = str(uuid.UUID(int=typed.serial, version=4))
    typed.serial += 1


typed.serial = 1


def vector_data(group, name, data, description, **kwargs):
    ds = group.create_dataset(name, data=data, **kwargs)
    typed(ds, "VectorData", "hdmf-common")
    ds.attrs["description"] = description
    return ds


def narrowest_unsigned(largest):
    # HDMF widens a VectorIndex uint8 -> uint16 -> uint32 -> uint64 as the offsets grow.
    for dtype in (np.uint8, np.uint16, np.uint32, np.uint64):
        if largest <= np.iinfo(dtype).max:
            return dtype


def write_nwb(path, units, start, stop, labels):
    text = h5py.string_dtype("utf-8")
    with h5py.File(path, "w") as f:
        f.attrs["nwb_version"] = NWB_VERSION
        typed(f, "NWBFile", "core")
        when = "2026-01-01T00:00:00+00:00"
        f.create_dataset("file_create_date", data=np.array([when], dtype=object), dtype=text)
        f.create_dataset("identifier", data="invented-recording", dtype=text)
        f.create_dataset("session_description", data="an invented session", dtype=text)
        f.create_dataset("session_start_time", data=when, dtype=text)
        f.create_dataset("timestamps_reference_time", data=when, dtype=text)
        for group in ("acquisition", "analysis", "processing", "stimulus/presentation", "stimulus/templates",
                      "general", "specifications"):
            f.require_group(group)
        f.attrs[".specloc"] = f["specifications"].ref

        table = f.create_group("units")
        typed(table, "Units", "core")
        table.attrs["description"] = "invented units"
        table.attrs["colnames"] = np.array(["spike_times", "unit_name"], dtype=object)
        ids = table.create_dataset("id", data=np.arange(len(units), dtype=np.int64))
        typed(ids, "ElementIdentifiers", "hdmf-common")
        flat = np.concatenate([t for _, t in units]) if units else np.zeros(0)
        ends = np.cumsum([len(t) for _, t in units])
        vector_data(table, "spike_times", flat.astype(np.float64), "Spike times for each unit in seconds")
        index = table.create_dataset("spike_times_index", data=ends.astype(narrowest_unsigned(ends[-1])))
        typed(index, "VectorIndex", "hdmf-common")
        index.attrs["description"] = "Index for VectorData 'spike_times'"
        index.attrs["target"] = table["spike_times"].ref
        vector_data(table, "unit_name", np.array([name for name, _ in units], dtype=object), "unit names", dtype=text)

        trials = f.create_group("intervals/trials")
        typed(trials, "TimeIntervals", "core")
        trials.attrs["description"] = "invented trials"
        columns = ["start_time", "stop_time"] + (["stimulus"] if labels is not None else [])
        trials.attrs["colnames"] = np.array(columns, dtype=object)
        typed(trials.create_dataset("id", data=np.arange(len(start), dtype=np.int64)), "ElementIdentifiers",
              "hdmf-common")
        vector_data(trials, "start_time", start, "Start time of epoch, in seconds")
        vector_data(trials, "stop_time", stop, "Stop time of epoch, in seconds")
        if labels is not None:
            vector_data(trials, "stimulus", np.array(labels, dtype=object), "stimulus condition", dtype=text)


# ---- MATLAB 7.3 ------------------------------------------------------------------------------

def matlab_class(obj, name):
    obj.attrs["MATLAB_class"] = np.bytes_(name)  # a fixed-length ASCII string, as MATLAB writes it


def matlab_empty(group, name, cls):
    ds = group.create_dataset(name, data=np.array([0, 0], dtype=np.uint64))
    matlab_class(ds, cls)
    ds.attrs["MATLAB_empty"] = np.uint8(1)
    return ds


def column_vector(values):
    # MATLAB n x 1 is stored column-major: HDF5 dimensions [1, n].
    return np.asarray(values).reshape(1, -1)


def matlab_doubles(group, name, values):
    if len(values) == 0:
        return matlab_empty(group, name, "double")
    ds = group.create_dataset(name, data=column_vector(np.asarray(values, dtype=np.float64)))
    matlab_class(ds, "double")
    return ds


def matlab_chars(group, name, text):
    units = np.frombuffer(text.encode("utf-16-le"), dtype="<u2")
    if len(units) == 0:
        return matlab_empty(group, name, "char")
    ds = group.create_dataset(name, data=units.reshape(-1, 1))  # a 1 x n row of characters
    matlab_class(ds, "char")
    ds.attrs["MATLAB_int_decode"] = np.int32(2)
    return ds


def matlab_cell(f, name, targets):
    ds = f.create_dataset(name, shape=(1, len(targets)), dtype=h5py.ref_dtype)
    for i, target in enumerate(targets):
        ds[0, i] = target.ref
    matlab_class(ds, "cell")


def write_mat(path, units, start, stop, labels):
    with h5py.File(path, "w", userblock_size=512) as f:
        refs = f.create_group("#refs#")
        matlab_empty(refs, "a", "double")  # MATLAB's canonical empty
        names = iter("b%d" % i for i in range(10 ** 6))
        matlab_cell(f, "spikes", [matlab_doubles(refs, next(names), t) for _, t in units])
        matlab_doubles(f, "trial_start", start)
        matlab_doubles(f, "trial_stop", stop)
        matlab_cell(f, "unit_ids", [matlab_chars(refs, next(names), name) for name, _ in units])
        if labels is not None:
            matlab_cell(f, "stimulus", [matlab_chars(refs, next(names), label) for label in labels])
    header = b"MATLAB 7.3 MAT-file, Platform: GLNXA64, Created on: Thu Jan  1 00:00:00 2026 HDF5 schema 1.00 ."
    block = header.ljust(116, b" ") + bytes(8) + b"\x00\x02" + b"IM"
    with open(path, "r+b") as out:
        out.write(block.ljust(512, b"\x00"))


# ---- text ------------------------------------------------------------------------------------

def write_text(spikes_path, trials_path, units, start, stop, labels):
    with open(spikes_path, "w", newline="", encoding="utf-8") as out:
        w = csv.writer(out)
        w.writerow(["unit", "time_s"])
        for name, times in units:
            if len(times) == 0:
                w.writerow([name, ""])
            for t in times:
                w.writerow([name, repr(float(t))])  # repr: the shortest text that reads back exactly
    with open(trials_path, "w", newline="", encoding="utf-8") as out:
        w = csv.writer(out)
        w.writerow(["start_s", "stop_s"] + (["stimulus"] if labels is not None else []))
        for k in range(len(start)):
            w.writerow([repr(float(start[k])), repr(float(stop[k]))] + ([labels[k]] if labels is not None else []))


# ---- the checks ------------------------------------------------------------------------------

def run_and_check(rastrum, workdir):
    os.makedirs(workdir, exist_ok=True)

    def run(*args, out=False):
        r = subprocess.run([rastrum, *args], stdout=subprocess.PIPE, stderr=subprocess.PIPE, check=False)
        if r.returncode != 0:
            raise SystemExit("rastrum %s failed (%d): %s" % (" ".join(args), r.returncode, r.stderr.decode()))
        return r.stdout.decode() if out else None

    failures = 0
    cases = [
        ("direct", ["frozen-bins", "--trials", "60", "--duration-s", "2", "--rate-hz", "20,35", "--modulation", "1.2",
                    "--seed", "11"],
         ["--bin-ms", "2,4", "--letters", "1-5", "--null-rotations", "3"]),
        ("stiminfo", ["conditions", "--duration-s", "0.5", "--means", "2,4,6,9", "--means", "3,1,3,1",
                      "--means", "0,0,0,0", "--seed", "5"],
         ["--window-ms", "0:500", "--code", "count", "--null-shuffles", "20", "--bootstrap", "20",
          "--population", "u1,u2"]),
    ]
    for command, synth, options in cases:
        native = os.path.join(workdir, command + ".h5")
        run("synth", *synth, "--out", native, "--overwrite")
        units, start, stop, labels = read_native(native)
        nwb, mat = os.path.join(workdir, command + ".nwb"), os.path.join(workdir, command + ".mat")
        spikes_csv, trials_csv = (os.path.join(workdir, command + e) for e in ("-spikes.csv", "-trials.csv"))
        write_nwb(nwb, units, start, stop, labels)
        write_mat(mat, units, start, stop, labels)
        write_text(spikes_csv, trials_csv, units, start, stop, labels)
        mat_options = ["--mat-spikes", "spikes", "--mat-trial-start", "trial_start", "--mat-trial-stop",
                       "trial_stop", "--mat-unit-ids", "unit_ids"] + (["--mat-stimulus", "stimulus"] if labels else [])
        inputs = {"native": [native], "nwb": [nwb], "mat": [mat] + mat_options,
                  "text": [spikes_csv, "--trials-csv", trials_csv]}

        results = {}
        for name, given in inputs.items():
            result = json.loads(run(command, *given, *options, "--quiet", "--json", "-", out=True))
            results[name] = {key: result[key] for key in ("parameters", "records", "curves")}
            survey = json.loads(run("survey", *given, "--json", "-", out=True))
            if survey["input"]["read"]["format"] != name:
                print("%s: survey reads %s as %s" % (command, name, survey["input"]["read"]["format"]))
                failures += 1
            converted = os.path.join(workdir, "%s-from-%s.h5" % (command, name))
            run("convert", *given, "--out", converted, "--overwrite", "--quiet")
            back = read_native(converted)
            same = (len(back[0]) == len(units) and all(a[0] == b[0] and np.array_equal(a[1], b[1])
                                                      for a, b in zip(back[0], units))
                    and np.array_equal(back[1], start) and np.array_equal(back[2], stop) and back[3] == labels)
            if not same:
                print("%s: convert from %s does not give the native recording back" % (command, name))
                failures += 1
        for name in ("nwb", "mat", "text"):
            if results[name] != results["native"]:
                print("%s: results from %s differ from the native layout's" % (command, name))
                failures += 1
        records = results["native"]["records"]
        if command == "direct":
            figures = ", ".join("%s at %g ms %.6f bits/s" % (r["unit"], r["bin_ms"], r["info_rate_bits_per_s"])
                                for r in records)
        else:
            figures = ", ".join("%s %.6f bits (plug-in)" % (r["unit"], r["info_bits"]["plug-in"]) for r in records)
        print("%s: %d records and %d curves identical from native, NWB, MAT and text (%s); convert lossless from each"
              % (command, len(records), len(results["native"]["curves"]), figures))
    return failures


def main():
    if len(sys.argv) != 4 or sys.argv[1] != "--run":
        raise SystemExit(__doc__)
    failures = run_and_check(sys.argv[2], sys.argv[3])
    print("%d failures" % failures)
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
