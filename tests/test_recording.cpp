// The recording model: trials are half-open intervals on the session clock, and validate() names
// the offending object the way the native layout does. Expected values are worked out by hand
// from that definition (times are binary fractions, so exact equality is the right test), and a
// brute-force scan of the definition checks the binary-search implementation on random data.
#include <rastrum/errors.hpp>
#include <rastrum/recording.hpp>

#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <random>

using rastrum::recording;

namespace {

bool contains(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

// Three trials, the first two adjacent: [1, 2), [2, 3), [5, 5.5).
recording three_trials() {
    recording rec;
    rec.source = "memory.h5";
    rec.units = {{"a", {0.5, 1.0, 1.25, 2.0, 2.75, 3.0, 4.0, 5.0, 5.5, 6.0}}};
    rec.trial_start = {1.0, 2.0, 5.0};
    rec.trial_stop = {2.0, 3.0, 5.5};
    return rec;
}

template <class F>
rastrum::input_error input_error_of(F f) {
    try {
        f();
    } catch (const rastrum::input_error& e) {
        return e;
    }
    throw std::runtime_error("expected an input_error, none was thrown");
}

template <class F>
std::string usage_error_of(F f) {
    try {
        f();
    } catch (const rastrum::usage_error& e) {
        return e.what();
    }
    throw std::runtime_error("expected a usage_error, none was thrown");
}

}  // namespace

TEST(Align, HalfOpenIntervalsAndBoundarySpikes) {
    const recording rec = three_trials();
    const auto aligned = rastrum::align_to_trials(rec.units[0].spike_times, rec, {0, 1, 2});
    ASSERT_EQ(aligned.size(), 3u);
    // 1.0 is the start of trial 0 (kept, at 0); 2.0 is its stop, so it belongs to trial 1 only.
    EXPECT_EQ(aligned[0], (std::vector<double>{0.0, 0.25}));
    EXPECT_EQ(aligned[1], (std::vector<double>{0.0, 0.75}));
    // 5.5 is the stop of trial 2: excluded.
    EXPECT_EQ(aligned[2], (std::vector<double>{0.0}));
}

TEST(Align, FollowsTheOrderOfTheTrialsAsked) {
    const recording rec = three_trials();
    const auto aligned = rastrum::align_to_trials(rec.units[0].spike_times, rec, {2, 0});
    ASSERT_EQ(aligned.size(), 2u);
    EXPECT_EQ(aligned[0], (std::vector<double>{0.0}));
    EXPECT_EQ(aligned[1], (std::vector<double>{0.0, 0.25}));
    EXPECT_TRUE(rastrum::align_to_trials(rec.units[0].spike_times, rec, {}).empty());
}

TEST(Align, KeepsRepeatedSpikesAtABoundary) {
    recording rec = three_trials();
    const std::vector<double> spikes = {2.0, 2.0, 2.0};
    const auto aligned = rastrum::align_to_trials(spikes, rec, {0, 1});
    EXPECT_TRUE(aligned[0].empty());
    EXPECT_EQ(aligned[1], (std::vector<double>{0.0, 0.0, 0.0}));
}

TEST(Align, OutOfRangeTrialIsABug) {
    const recording rec = three_trials();
    EXPECT_THROW(rastrum::align_to_trials(rec.units[0].spike_times, rec, {3}), rastrum::internal_error);
}

TEST(Outside, CountsSpikesInNoTrial) {
    const recording rec = three_trials();
    // 0.5, 3.0 (stop of trial 1), 4.0, 5.5 (stop of trial 2), 6.0
    EXPECT_EQ(rastrum::spikes_outside_trials(rec.units[0].spike_times, rec), 5u);
    EXPECT_EQ(rastrum::spikes_outside_trials({}, rec), 0u);
}

TEST(Align, AgreesWithTheDefinitionOnRandomData) {
    std::mt19937_64 rng(20240601);
    std::uniform_real_distribution<double> uniform(0.0, 100.0);
    for (int round = 0; round < 20; ++round) {
        recording rec;
        rec.source = "random";
        double t = uniform(rng) / 50.0;
        for (int k = 0; k < 30; ++k) {
            rec.trial_start.push_back(t);
            t += 0.5 + uniform(rng) / 20.0;
            rec.trial_stop.push_back(t);
            if (k % 3 != 0) t += uniform(rng) / 50.0;  // some trials adjacent, some with gaps
        }
        std::vector<double> spikes;
        for (int i = 0; i < 500; ++i) spikes.push_back(uniform(rng));
        // Spikes exactly on boundaries are the cases a binary search gets wrong.
        for (std::size_t k = 0; k < rec.trial_count(); k += 4) {
            spikes.push_back(rec.trial_start[k]);
            spikes.push_back(rec.trial_stop[k]);
        }
        std::sort(spikes.begin(), spikes.end());
        rec.units = {{"r", spikes}};
        ASSERT_NO_THROW(rastrum::validate(rec));

        std::vector<std::size_t> all(rec.trial_count());
        for (std::size_t k = 0; k < all.size(); ++k) all[k] = k;
        const auto aligned = rastrum::align_to_trials(spikes, rec, all);
        std::size_t outside = 0;
        std::vector<std::vector<double>> expected(rec.trial_count());
        for (const double s: spikes) {
            bool inside = false;
            for (std::size_t k = 0; k < rec.trial_count(); ++k) {
                if (rec.trial_start[k] <= s && s < rec.trial_stop[k]) {
                    expected[k].push_back(s - rec.trial_start[k]);
                    inside = true;
                }
            }
            if (!inside) ++outside;
        }
        EXPECT_EQ(aligned, expected);
        EXPECT_EQ(rastrum::spikes_outside_trials(spikes, rec), outside);
    }
}

TEST(SelectTrials, WithoutAStimulusTakesEveryTrial) {
    recording rec = three_trials();
    EXPECT_EQ(rastrum::select_trials(rec, std::nullopt), (std::vector<std::size_t>{0, 1, 2}));
}

TEST(SelectTrials, ByLabel) {
    recording rec = three_trials();
    rec.stimulus = {"grating", "noise", "grating"};
    EXPECT_EQ(rastrum::select_trials(rec, std::string("grating")), (std::vector<std::size_t>{0, 2}));
    EXPECT_EQ(rastrum::select_trials(rec, std::string("noise")), (std::vector<std::size_t>{1}));
    EXPECT_EQ(rastrum::select_trials(rec, std::nullopt), (std::vector<std::size_t>{0, 1, 2}));
}

TEST(SelectTrials, UnknownLabelListsTheLabelsThatExist) {
    recording rec = three_trials();
    rec.stimulus = {"grating", "noise", "grating"};
    const std::string msg = usage_error_of([&] { rastrum::select_trials(rec, std::string("gratin")); });
    EXPECT_TRUE(contains(msg, "\"gratin\"")) << msg;
    EXPECT_TRUE(contains(msg, "\"grating\" (2 trials)")) << msg;
    EXPECT_TRUE(contains(msg, "\"noise\" (1 trials)")) << msg;
    EXPECT_TRUE(contains(msg, "memory.h5")) << msg;
}

TEST(SelectTrials, ALabelAskedOfAnUnlabelledRecording) {
    const recording rec = three_trials();
    const std::string msg = usage_error_of([&] { rastrum::select_trials(rec, std::string("1")); });
    EXPECT_TRUE(contains(msg, "no stimulus labels")) << msg;
}

TEST(StimulusLabels, FirstAppearanceOrderWithCounts) {
    recording rec = three_trials();
    rec.trial_start.push_back(6.0);
    rec.trial_stop.push_back(7.0);
    rec.stimulus = {"2", "10", "2", "1"};
    const auto labels = rastrum::stimulus_labels(rec);
    const std::vector<std::pair<std::string, std::size_t>> expected = {{"2", 2}, {"10", 1}, {"1", 1}};
    EXPECT_EQ(labels, expected);
    EXPECT_TRUE(rastrum::stimulus_labels(three_trials()).empty());
}

TEST(Unit, FindsByIdAndListsIdsWhenAbsent) {
    recording rec = three_trials();
    rec.units.push_back({"b7", {1.5}});
    EXPECT_EQ(rec.unit("b7").spike_times, (std::vector<double>{1.5}));
    std::string msg;
    try {
        rec.unit("b8");
    } catch (const rastrum::usage_error& e) {
        msg = e.what();
    }
    EXPECT_TRUE(contains(msg, "\"b8\"")) << msg;
    EXPECT_TRUE(contains(msg, "a, b7")) << msg;
}

TEST(Validate, AcceptsAdjacentTrials) { EXPECT_NO_THROW(rastrum::validate(three_trials())); }

struct broken_case {
    const char* name;
    void (*damage)(recording&);
    const char* object;
    const char* expected_part;
};

class ValidateBroken: public ::testing::TestWithParam<broken_case> {};

TEST_P(ValidateBroken, NamesTheObjectAndWhatWasExpected) {
    recording rec = three_trials();
    GetParam().damage(rec);
    const auto e = input_error_of([&] { rastrum::validate(rec); });
    EXPECT_EQ(e.file, "memory.h5");
    EXPECT_EQ(e.object, GetParam().object) << e.what();
    EXPECT_TRUE(contains(e.expected, GetParam().expected_part)) << e.what();
}

const double not_a_number = std::numeric_limits<double>::quiet_NaN();
const double infinity = std::numeric_limits<double>::infinity();

INSTANTIATE_TEST_SUITE_P(
    Broken, ValidateBroken,
    ::testing::Values(
        broken_case{"no_units", [](recording& r) { r.units.clear(); }, "/units", "at least one unit"},
        broken_case{"nan_spike", [](recording& r) { r.units[0].spike_times[1] = not_a_number; }, "/units/a/spike_times[1]",
                    "finite"},
        broken_case{"unsorted_spikes", [](recording& r) { std::swap(r.units[0].spike_times[2], r.units[0].spike_times[3]); },
                    "/units/a/spike_times[3]", "ascending"},
        broken_case{"duplicate_ids", [](recording& r) { r.units.push_back(r.units[0]); }, "/units/a", "differ"},
        broken_case{"stop_before_start", [](recording& r) { r.trial_stop[1] = 1.5; }, "/trials/stop_time[1]",
                    "after the start"},
        broken_case{"stop_equals_start", [](recording& r) { r.trial_stop[2] = 5.0; }, "/trials/stop_time[2]",
                    "after the start"},
        broken_case{"overlap", [](recording& r) { r.trial_stop[0] = 2.5; }, "/trials/stop_time[0]", "not overlap"},
        broken_case{"out_of_order",
                    [](recording& r) {
                        r.trial_start = {1.0, 5.0, 2.0};
                        r.trial_stop = {2.0, 5.5, 3.0};
                    },
                    "/trials/start_time[2]", "ascending"},
        broken_case{"lengths_differ", [](recording& r) { r.trial_stop.pop_back(); }, "/trials/stop_time",
                    "one per start time"},
        broken_case{"no_trials",
                    [](recording& r) {
                        r.trial_start.clear();
                        r.trial_stop.clear();
                    },
                    "/trials/start_time", "at least one trial"},
        broken_case{"infinite_start", [](recording& r) { r.trial_start[0] = -infinity; }, "/trials/start_time[0]",
                    "finite"},
        broken_case{"nan_stop", [](recording& r) { r.trial_stop[2] = not_a_number; }, "/trials/stop_time[2]", "finite"},
        broken_case{"labels_short", [](recording& r) { r.stimulus = {"x", "y"}; }, "/trials/stimulus",
                    "3 labels"}),
    [](const ::testing::TestParamInfo<broken_case>& param_info) { return std::string(param_info.param.name); });
