"""Makes the seed corpora of the libFuzzer harnesses (tests/fuzz/corpus/<loader>/): a few small,
valid recordings per loader, written the way the robustness corpus is (tests/data/bad/make_bad_files.py:
h5py and plain bytes, and tests/reference/write_nwb_mat.py for NWB and MAT-files), so the fuzzers
start from files every loader accepts and mutate from there. Deterministic; rerun it after changing
a writer, and keep the corpora small (the fuzzers find the rest).

Usage: /usr/bin/python3 tests/fuzz/make_corpus.py   (writes into tests/fuzz/corpus)
"""
import os
import shutil
import sys

import h5py
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
CORPUS = os.path.join(HERE, "corpus")
sys.path.insert(0, os.path.join(HERE, "..", "reference"))
import write_nwb_mat  # noqa: E402

UNITS = [("u1", np.array([0.1, 0.35, 1.2, 1.6])), ("u2", np.array([0.5, 1.05])), ("u10", np.array([]))]
START = np.array([0.0, 1.0, 2.0])
STOP = np.array([0.9, 1.9, 2.5])
LABELS = ["a", "b", "a"]


def out(loader, name):
    folder = os.path.join(CORPUS, loader)
    os.makedirs(folder, exist_ok=True)
    return os.path.join(folder, name)


def native(name, libver="earliest", time_type=np.float64, labels="vlen", attributes=False):
    with h5py.File(out("native", name), "w", libver=libver) as f:
        if attributes:
            f.attrs["layout"] = np.bytes_("spike-recording")
            f.attrs["layout_version"] = np.int64(1)
        for unit, times in UNITS:
            f.create_dataset("units/%s/spike_times" % unit, data=np.asarray(times, dtype=time_type))
        f.create_dataset("trials/start_time", data=START.astype(time_type))
        f.create_dataset("trials/stop_time", data=STOP.astype(time_type))
        if labels == "vlen":
            f.create_dataset("trials/stimulus", data=np.array(LABELS, dtype=object), dtype=h5py.string_dtype())
        elif labels == "fixed":
            f.create_dataset("trials/stimulus", data=np.array(LABELS, dtype="S4"))
        elif labels == "int":
            f.create_dataset("trials/stimulus", data=np.array([3, -7, 3], dtype=np.int16))


def make():
    shutil.rmtree(CORPUS, ignore_errors=True)
    # The native layout: h5py's default file format (no metadata checksums, so mutations reach the
    # readers) and the 1.8 format rastrum writes (checksummed); every label kind the reader takes.
    native("vlen-labels.h5")
    native("int-labels-float32.h5", time_type=np.float32, labels="int", attributes=True)
    native("fixed-labels-v108.h5", libver="v108", labels="fixed", attributes=True)
    native("unlabelled.h5", labels=None)

    # NWB 2.x, as h5py writes it following the specification, and with float32 trial times.
    write_nwb_mat.write_nwb(out("nwb", "labelled.nwb"), UNITS, START, STOP, LABELS)
    write_nwb_mat.write_nwb(out("nwb", "unlabelled.nwb"), UNITS[:2], START[:2].astype(np.float32),
                            STOP[:2].astype(np.float32), None)

    # MATLAB 7.3: cells of doubles, a cellstr of labels and of unit ids; and numeric labels.
    write_nwb_mat.write_mat(out("mat", "cellstr-labels.mat"), UNITS, START, STOP, LABELS)
    write_nwb_mat.write_mat(out("mat", "numeric-labels.mat"), UNITS[:2], START, STOP, LABELS)
    with h5py.File(out("mat", "numeric-labels.mat"), "r+") as f:
        del f["stimulus"]
        ds = f.create_dataset("stimulus", data=np.array([[0.25, 3.0, 0.25]]))
        ds.attrs["MATLAB_class"] = np.bytes_("double")

    # Text: the spikes CSV, a NUL byte, the trials CSV (the harness splits there).
    def text(name, spikes, trials):
        with open(out("text", name), "wb") as f:
            f.write(spikes + b"\0" + trials)
    text("labelled.csv", b"unit,time_s\nu1,0.1\nu1,0.35\nu2,0.5\nu10,\nu2,1.05\n",
         b"start_s,stop_s,stimulus\n0,0.9,a\n1,1.9,b\n2,2.5,a\n")
    text("quoted-crlf.csv", b"\xef\xbb\xbf# rastrum\r\nunit,extra,time_s\r\n\"u,1\",\"x\"\"y\",1e-1\r\n\r\n u2 ,,+0.5\r\n",
         b"stop_s,start_s\r\n0.9,0\r\n1.9,1\r\n")
    text("unlabelled.csv", b"time_s,unit\n0.1,u1\n1.2,u2\n", b"start_s,stop_s\n0,0.9\n1,1.9\n")

    total = 0
    for root, _, files in os.walk(CORPUS):
        total += sum(os.path.getsize(os.path.join(root, name)) for name in files)
    print("seed corpora written to %s (%d bytes)" % (CORPUS, total))


if __name__ == "__main__":
    make()
