// Plain-text recordings: a spikes CSV (unit,time_s) and a trials CSV (start_s,stop_s[,stimulus]),
// each with a header line; quoting as in RFC 4180 (common practice for CSV). The rules and messages
// are rastrum's own design (notes/recording-layout.md, "Plain text"); each malformed file must be
// reported with its path and line.
#include "loader_checks.hpp"
#include "recording_writers.hpp"

#include <rastrum/format_detection.hpp>
#include <rastrum/recording_source.hpp>
#include <rastrum/recording_text.hpp>

#include <gtest/gtest.h>

#include <fstream>

using namespace rastrum::testing;
using rastrum::read_recording_text;

namespace {

std::string text_file(const std::string& suffix, const std::string& content) {
    const std::string path = scratch(suffix);
    std::ofstream(path, std::ios::binary) << content;
    return path;
}

const char* good_trials = "start_s,stop_s,stimulus\n0,0.75,a\n1,1.875,b\n2,2.75,a\n";
const char* good_spikes = "unit,time_s\nu1,0.125\nu1,0.5\nu2,1.75\n";

void expect_text_error(const std::string& spikes, const std::string& trials, const std::string& file,
                       const std::string& object, const std::string& expected_part, const std::string& found_part = "") {
    const rastrum::input_error e = input_error_of([&] { read_recording_text(spikes, trials); });
    EXPECT_EQ(e.file, file) << e.what();
    EXPECT_EQ(e.object, object) << e.what();
    EXPECT_TRUE(contains(e.expected, expected_part)) << e.what();
    EXPECT_TRUE(contains(e.found, found_part)) << e.what();
}

void expect_spikes_error(const std::string& spikes_content, const std::string& object, const std::string& expected_part,
                         const std::string& found_part = "") {
    const std::string spikes = text_file(".spikes.csv", spikes_content);
    expect_text_error(spikes, text_file(".trials.csv", good_trials), spikes, object, expected_part, found_part);
}

void expect_trials_error(const std::string& trials_content, const std::string& object, const std::string& expected_part,
                         const std::string& found_part = "") {
    const std::string trials = text_file(".trials.csv", trials_content);
    expect_text_error(text_file(".spikes.csv", good_spikes), trials, trials, object, expected_part, found_part);
}

}  // namespace

TEST(TextRead, WhatTheWriterWroteExactly) {
    const rastrum::recording rec = invented_recording();  // quotes, commas and UTF-8 in labels; an empty unit
    const std::string spikes = scratch(".spikes.csv"), trials = scratch(".trials.csv");
    write_text(rec, spikes, trials);
    const rastrum::recording back = read_recording_text(spikes, trials);
    expect_same_recording(back, rec);
    EXPECT_EQ(back.origin.format, "text");
    EXPECT_EQ(back.origin.trials.file, trials);
    EXPECT_EQ(back.origin.labels.object, "column stimulus");
}

TEST(TextRead, CrlfBomCommentsBlankLinesSpacesAndColumnOrder) {
    const std::string spikes = text_file(".spikes.csv",
                                         "\xef\xbb\xbf# made by hand, with a comma\r\nchannel,time_s,unit\r\n"
                                         "7, 0.5 ,u2\r\n\r\n7,1.75,\"u1\"\r\n7,+0.25,u1\r\n");
    const std::string trials = text_file(".trials.csv", "stop_s,start_s\n0.75,0\n1.875,1\n");
    const rastrum::recording rec = read_recording_text(spikes, trials);
    ASSERT_EQ(rec.units.size(), 2u);
    EXPECT_EQ(rec.units[0].id, "u1");
    EXPECT_EQ(rec.units[0].spike_times, (std::vector<double>{0.25, 1.75}));
    EXPECT_EQ(rec.units[1].spike_times, (std::vector<double>{0.5}));
    EXPECT_EQ(rec.trial_stop, (std::vector<double>{0.75, 1.875}));
    EXPECT_FALSE(rec.has_stimulus());
    ASSERT_EQ(rec.warnings.size(), 1u);  // u1's times came out of order
    EXPECT_TRUE(contains(rec.warnings[0], "sorted"));
}

TEST(TextRead, LabelColumnByName) {
    const std::string spikes = text_file(".spikes.csv", good_spikes);
    const std::string trials = text_file(".trials.csv", "start_s,stop_s,contrast,stimulus\n0,0.75,0.5,a\n1,1.875,1,b\n");
    EXPECT_EQ(read_recording_text(spikes, trials).stimulus, (std::vector<std::string>{"a", "b"}));
    EXPECT_EQ(read_recording_text(spikes, trials, std::string("contrast")).stimulus,
              (std::vector<std::string>{"0.5", "1"}));
    const std::string message = usage_error_of([&] { read_recording_text(spikes, trials, std::string("angle")); });
    EXPECT_TRUE(contains(message, "start_s, stop_s, contrast, stimulus")) << message;
}

TEST(TextRead, DetectedByTheHeader) {
    const std::string spikes = text_file(".spikes.csv", good_spikes);
    EXPECT_EQ(rastrum::detect_format(spikes).format, rastrum::recording_format::text);
    const auto e = input_error_of([&] { rastrum::detect_format(text_file(".txt", "this is not HDF5\n")); });
    EXPECT_TRUE(contains(e.expected, "unit and time_s")) << e.what();
    rastrum::recording_source source;
    source.path = spikes;
    EXPECT_TRUE(contains(usage_error_of([&] { rastrum::read_recording(source); }), "--trials-csv"));
    source.trials_csv = text_file(".trials.csv", good_trials);
    EXPECT_EQ(rastrum::read_recording(source).trial_count(), 3u);
}

// --- malformed rows: file and line ------------------------------------------------------------

TEST(TextMalformed, NotANumber) { expect_spikes_error("unit,time_s\nu1,0.5\nu1,0.5s\n", "line 3, time_s", "decimal", "0.5s"); }
TEST(TextMalformed, DecimalComma) { expect_spikes_error("unit,time_s\nu1,\"0,5\"\n", "line 2, time_s", "decimal", "0,5"); }
TEST(TextMalformed, NanTime) { expect_spikes_error("unit,time_s\nu1,0.5\nu1,nan\n", "line 3, time_s", "finite", "nan"); }
TEST(TextMalformed, HugeTime) { expect_spikes_error("unit,time_s\nu1,1e400\n", "line 2, time_s", "decimal", "1e400"); }
TEST(TextMalformed, TooFewFields) { expect_spikes_error("unit,time_s\nu1,0.5\nu1\n", "line 3", "2 fields", "1"); }
TEST(TextMalformed, TooManyFields) { expect_spikes_error("unit,time_s\nu1,0.5,7\n", "line 2", "2 fields", "3"); }
TEST(TextMalformed, EmptyUnit) { expect_spikes_error("unit,time_s\n,0.5\n", "line 2, unit", "unit id", "empty"); }
TEST(TextMalformed, WrongHeader) { expect_spikes_error("unit,time_ms\nu1,500\n", "line 1", "time_s", "unit, time_ms"); }
TEST(TextMalformed, OpenQuote) {
    expect_spikes_error("unit,time_s\nu1,0.5\n\"u2,0.7\nu3,0.9\n", "line 3", "closing quote", "end of the file");
}
TEST(TextMalformed, TextAfterClosingQuote) {
    expect_spikes_error("unit,time_s\n\"u1\"x,0.5\n", "line 2", "after a closing quote", "'x'");
}
TEST(TextMalformed, NotUtf8) { expect_spikes_error("unit,time_s\ncaf\xe9,0.5\n", "line 2, field 1", "UTF-8", "0xe9 at offset 3"); }
TEST(TextMalformed, NoRows) { expect_spikes_error("unit,time_s\n", "", "at least one row", "none"); }
TEST(TextMalformed, EmptyFile) { expect_spikes_error("", "", "header line", "no header"); }
TEST(TextMalformed, RepeatedHeaderColumn) { expect_spikes_error("unit,time_s,unit\nu1,0.5,u1\n", "line 1", "differ", "unit"); }

TEST(TextMalformed, TrialStopBeforeStart) {
    expect_trials_error("start_s,stop_s\n0,0.75\n\n1,0.5\n", "line 4, stop_s", "after the start time 1", "0.5");
}
TEST(TextMalformed, TrialsOutOfOrder) {
    expect_trials_error("start_s,stop_s\n1,1.5\n0,0.5\n", "line 3, start_s", "ascending", "0");
}
TEST(TextMalformed, NoTrials) { expect_trials_error("start_s,stop_s\n", "column start_s", "at least one trial"); }
TEST(TextMalformed, TrialsMissingColumn) { expect_trials_error("start_s,end_s\n0,1\n", "line 1", "stop_s", "start_s, end_s"); }
TEST(TextMalformed, MissingTrialsFile) {
    const std::string trials = scratch(".absent.csv");
    expect_text_error(text_file(".spikes.csv", good_spikes), trials, trials, "", "existing CSV file", "no such file");
}
