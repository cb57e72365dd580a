"""Makes the robustness corpus in this folder: small files, each broken in one way, and cases.json,
which says for each file the input options it is read with, the object the error must name and a
word of the problem. tests/test_cli_corpus.cpp runs every case through `rastrum survey` and
`rastrum direct`: each must exit 3 with a message naming the file, the object and the problem, with
no crash, no hang and no allocation beyond what the file holds (it runs under a memory limit).

Written with h5py and plain bytes, independent of rastrum's own writers. The valid NWB and MAT
files the cases start from come from tests/reference/write_nwb_mat.py. Deterministic: run it again
and the cases are the same (HDF5 may lay out bytes differently between library versions).

Usage: /usr/bin/python3 make_bad_files.py   (writes into the folder it is in)
"""
import json
import os
import random
import sys

import h5py
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "..", "reference"))
import write_nwb_mat  # noqa: E402  (the valid NWB and MAT files)

UNITS = [("u1", np.array([0.1, 0.35, 1.2, 1.6])), ("u2", np.array([0.5, 1.05]))]
START = np.array([0.0, 1.0])
STOP = np.array([0.9, 1.9])
LABELS = ["a", "b"]
MAT_OPTIONS = ["--mat-spikes", "spikes", "--mat-trial-start", "trial_start", "--mat-trial-stop", "trial_stop"]

cases = []


def case(name, problem, obj, options=(), file=None):
    """Records that `name` must fail naming `obj` (in `file`, default the case's own) and `problem`."""
    cases.append({"file": name, "options": list(options), "object": obj, "problem": problem,
                  "message_file": file or name})


def path(name):
    return os.path.join(HERE, name)


def native(name, change=None, units=UNITS, start=START, stop=STOP, labels=LABELS):
    with h5py.File(path(name), "w") as f:
        for unit, times in units:
            f.create_dataset("units/%s/spike_times" % unit, data=np.asarray(times, dtype=np.float64))
        f.create_dataset("trials/start_time", data=np.asarray(start, dtype=np.float64))
        f.create_dataset("trials/stop_time", data=np.asarray(stop, dtype=np.float64))
        if labels is not None:
            f.create_dataset("trials/stimulus", data=np.array(labels, dtype=object), dtype=h5py.string_dtype())
        if change:
            change(f)


def replace(f, name, **kwargs):
    del f[name]
    return f.create_dataset(name, **kwargs)


def claimed(f, name, elements, dtype=np.float64):
    """A chunked dataset extended to `elements` with nothing written: only its header says how big it is."""
    if name in f:
        del f[name]
    ds = f.create_dataset(name, shape=(0,), maxshape=(None,), chunks=(4096,), dtype=dtype)
    ds.resize((elements,))
    return ds


def latin1_labels(f, name, labels):
    # Latin-1 bytes (not UTF-8) in variable-length strings; rastrum checks UTF-8 whatever the
    # declared character set.
    replace(f, name, data=np.array(labels, dtype=object), dtype=h5py.string_dtype("ascii"))


def truncate(name, keep=0.5):
    size = os.path.getsize(path(name))
    with open(path(name), "r+b") as out:
        out.truncate(int(size * keep))


def nwb(name, change=None, start=START, stop=STOP, labels=LABELS):
    write_nwb_mat.write_nwb(path(name), UNITS, np.asarray(start), np.asarray(stop), labels)
    if change:
        with h5py.File(path(name), "r+") as f:
            change(f)


def mat(name, change=None):
    write_nwb_mat.write_mat(path(name), UNITS, START, STOP, LABELS)
    if change:
        with h5py.File(path(name), "r+") as f:
            change(f)


def text(spikes, trials, name):
    with open(path(name + "-spikes.csv"), "wb") as out:
        out.write(spikes)
    with open(path(name + "-trials.csv"), "wb") as out:
        out.write(trials)
    return name + "-spikes.csv", ["--trials-csv", "{dir}/" + name + "-trials.csv"]


def make():
    for old in os.listdir(HERE):
        if old.endswith((".h5", ".nwb", ".mat", ".csv", ".bin")):
            os.remove(path(old))

    # ---- the file itself ----
    native("truncated.h5")
    truncate("truncated.h5")
    case("truncated.h5", "truncated", "")
    with open(path("garbage.bin"), "wb") as out:
        out.write(random.Random(1).randbytes(3000))
    case("garbage.bin", "neither", "")
    open(path("empty.h5"), "wb").close()
    case("empty.h5", "empty file", "")

    # ---- the native layout ----
    native("integer-spikes.h5", lambda f: replace(f, "units/u1/spike_times", data=np.array([1, 2], dtype=np.int32)))
    case("integer-spikes.h5", "32-bit signed integer", "/units/u1/spike_times")
    native("two-dimensional-starts.h5",
           lambda f: replace(f, "trials/start_time", data=np.array([[0.0, 1.0], [0.5, 1.5]])))
    case("two-dimensional-starts.h5", "2-D dataset", "/trials/start_time")
    native("nan-spike.h5", units=[("u1", [0.1, 0.2, float("nan")]), ("u2", [0.5])])
    case("nan-spike.h5", "nan", "/units/u1/spike_times[2]")
    native("infinite-stop.h5", stop=[0.9, float("inf")])
    case("infinite-stop.h5", "inf", "/trials/stop_time[1]")
    native("no-trials.h5", start=[], stop=[], labels=None)
    case("no-trials.h5", "no trials", "/trials/start_time")
    native("zero-length-trial.h5", stop=[0.9, 1.0])
    case("zero-length-trial.h5", "after the start time", "/trials/stop_time[1]")
    native("label-not-utf8.h5", lambda f: latin1_labels(f, "trials/stimulus", [b"a", b"caf\xe9"]))
    case("label-not-utf8.h5", "not UTF-8", "/trials/stimulus[1]")
    native("larger-than-the-file.h5", lambda f: claimed(f, "trials/stop_time", 10 ** 7))
    case("larger-than-the-file.h5", "fits in the file", "/trials/stop_time")
    native("trillion-elements.h5", lambda f: claimed(f, "units/u1/spike_times", 10 ** 12))
    case("trillion-elements.h5", "2^31", "/units/u1/spike_times")

    def cycle(f):
        del f["units/u1"], f["units/u2"]
        f["units/u1"] = h5py.SoftLink("/units/u2")
        f["units/u2"] = h5py.SoftLink("/units/u1")
    native("cyclic-links.h5", cycle)
    case("cyclic-links.h5", "cycle of soft links", "/units/u1")

    def dangling(f):
        del f["trials/stop_time"]
        f["trials/stop_time"] = h5py.SoftLink("/nowhere")
    native("dangling-link.h5", dangling)
    case("dangling-link.h5", "dangling", "/trials/stop_time")

    def external(f):
        del f["units/u1/spike_times"]
        f["units/u1/spike_times"] = h5py.ExternalLink("elsewhere.h5", "/spike_times")
    native("external-link.h5", external)
    case("external-link.h5", "external link", "/units/u1/spike_times")

    # ---- NWB ----
    def index(values, dtype=np.uint64):
        return lambda f: replace(f, "units/spike_times_index", data=np.array(values, dtype=dtype))
    nwb("nwb-index-past-the-data.nwb", index([4, 7]))
    case("nwb-index-past-the-data.nwb", "at most 6", "/units/spike_times_index[1]")
    nwb("nwb-index-backwards.nwb", index([4, 3]))
    case("nwb-index-backwards.nwb", "ascending", "/units/spike_times_index[1]")
    nwb("nwb-index-huge.nwb", index([2 ** 63 + 5, 6]))
    case("nwb-index-huge.nwb", "fits in int64", "/units/spike_times_index[0]")
    nwb("nwb-trillion-spikes.nwb", lambda f: claimed(f, "units/spike_times", 10 ** 12))
    case("nwb-trillion-spikes.nwb", "2^31", "/units/spike_times")
    nwb("nwb-nan-start.nwb", lambda f: replace(f, "intervals/trials/start_time",
                                                data=np.array([0.0, np.nan], dtype=np.float32)))
    case("nwb-nan-start.nwb", "nan", "/intervals/trials/start_time[1]")
    nwb("nwb-label-not-utf8.nwb", lambda f: latin1_labels(f, "intervals/trials/stimulus", [b"caf\xe9", b"b"]))
    case("nwb-label-not-utf8.nwb", "not UTF-8", "/intervals/trials/stimulus[0]")
    nwb("nwb-zero-length-trial.nwb", stop=[0.0, 1.9])
    case("nwb-zero-length-trial.nwb", "after the start time", "/intervals/trials/stop_time[0]")
    nwb("nwb-truncated.nwb")
    truncate("nwb-truncated.nwb", 0.3)
    case("nwb-truncated.nwb", "truncated", "")

    # ---- MATLAB 7.3 ----
    def self_reference(f):
        f["spikes"][0, 0] = f["spikes"].ref  # a cell that contains itself
    mat("mat-cell-contains-itself.mat", self_reference)
    case("mat-cell-contains-itself.mat", "a cell", "spikes{1}", MAT_OPTIONS)

    def integer_times(f):
        del f["trial_start"]
        ds = f.create_dataset("trial_start", data=np.array([[0, 1]], dtype=np.int32).T)
        ds.attrs["MATLAB_class"] = np.bytes_("int32")
    mat("mat-integer-times.mat", integer_times)
    case("mat-integer-times.mat", "double(trial_start)", "trial_start", MAT_OPTIONS)

    def nan_spike(f):
        target = f[f["spikes"][0, 0]]
        target[0, 1] = np.nan
    mat("mat-nan-spike.mat", nan_spike)
    case("mat-nan-spike.mat", "nan", "spikes{1}(2)", MAT_OPTIONS)

    def claims(f):
        ds = claimed(f, "#refs#/huge", 10 ** 9)
        ds.attrs["MATLAB_class"] = np.bytes_("double")
        f["spikes"][0, 1] = ds.ref
    mat("mat-cell-larger-than-the-file.mat", claims)
    case("mat-cell-larger-than-the-file.mat", "fits in the file", "spikes{2}", MAT_OPTIONS)
    def empty_trial_start(f):
        del f["trial_start"]
        write_nwb_mat.matlab_empty(f, "trial_start", "double")
    mat("mat-empty-trial-start.mat", empty_trial_start)
    # Labels are given too: the error must name the start variable, not the labels it leaves unmatched.
    case("mat-empty-trial-start.mat", "no trials", "trial_start", MAT_OPTIONS + ["--mat-stimulus", "stimulus"])
    mat("mat-truncated.mat")
    truncate("mat-truncated.mat", 0.5)
    case("mat-truncated.mat", "truncated", "", MAT_OPTIONS)
    mat("mat-header-only.mat")
    truncate("mat-header-only.mat", 0.0)
    with open(path("mat-header-only.mat"), "wb") as out:
        out.write(b"MATLAB 7.3 MAT-file, Platform: GLNXA64, Created on: Thu Jan  1 00:00:00 2026 HDF5 schema 1.00 .")
    case("mat-header-only.mat", "without HDF5 data", "", MAT_OPTIONS)

    # ---- text ----
    trials = b"start_s,stop_s,stimulus\n0,0.9,a\n1,1.9,b\n"
    spikes, options = text(b"unit,time_s\nu1,0.1\nu1,nan\n", trials, "text-nan-time")
    case(spikes, "finite", "line 3, time_s", options)
    spikes, options = text(b"unit,time_s\nu1,0.1,7\n", trials, "text-extra-field")
    case(spikes, "2 fields", "line 2", options)
    spikes, options = text(b"unit,time_s\nu1,0.1\n", b"start_s,stop_s,stimulus\n0,0.9,caf\xe9\n", "text-label-not-utf8")
    case(spikes, "not UTF-8", "line 2, field 3", options, file="text-label-not-utf8-trials.csv")
    spikes, options = text(b"unit,time_s\nu1,0.1\n", b"start_s,stop_s\n0,0\n", "text-zero-length-trial")
    case(spikes, "after the start time", "line 2, stop_s", options, file="text-zero-length-trial-trials.csv")
    spikes, options = text(b"unit,time_s\n\"u1,0.1\n", trials, "text-open-quote")
    case(spikes, "closing quote", "line 2", options)

    with open(path("cases.json"), "w") as out:
        json.dump(cases, out, indent=1)
        out.write("\n")
    print("%d cases written to %s" % (len(cases), HERE))


if __name__ == "__main__":
    make()
