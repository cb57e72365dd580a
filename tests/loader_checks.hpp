#pragma once
// What the loader tests of every format share: scratch files named after the test, catching the
// error a call must throw, and one invented recording with awkward values.
#include <rastrum/errors.hpp>
#include <rastrum/recording.hpp>

#include <H5Cpp.h>

#include <cstdint>
#include <functional>
#include <string>

namespace rastrum::testing {

bool contains(const std::string& text, const std::string& part);

/// A fresh path in the build tree's scratch folder, named after the running test.
std::string scratch(const std::string& suffix);

/// A scratch file made by `write`, then changed by `change` (opened read-write with the HDF5 C++
/// API) when given: the way the HDF5 loader tests make each malformed file.
std::string hdf5_file(const std::string& suffix, const std::function<void(const std::string&)>& write,
                      const std::function<void(H5::H5File&)>& change);

/// The input_error (or usage_error message) `f` throws; fails the test when it throws nothing or something else.
input_error input_error_of(const std::function<void()>& f);
std::string usage_error_of(const std::function<void()>& f);

/// Three units (u1, u2 with no spikes, u10, so natural order differs from byte order), four trials
/// with UTF-8 labels, times that are not binary fractions (1/3, 0.1) and one spike outside every trial.
recording invented_recording();

/// The same recording with integer labels and times that float32 holds exactly (binary fractions).
recording binary_fraction_recording();

/// `units` units u1, u2, ... of `spikes_each` sorted uniform times in [0, 10) s over 10 trials
/// [k, k + trial_length) s, labelled a, b, a, ... when `labelled`; drawn from `seed`.
recording random_units(std::size_t units, std::size_t spikes_each, double trial_length, bool labelled,
                       std::uint64_t seed);

/// Units (ids and spike times), trials and labels equal, exactly.
void expect_same_recording(const recording& a, const recording& b);

}  // namespace rastrum::testing
