// Resource bounds end to end: every analysis path estimates what it will hold before allocating and
// refuses a request beyond --max-memory with exit 4 and a message naming the setting and the bound
// (notes/robustness.md, "Resource bounds"). Every run is under cli_runner's 2 GiB address-space
// limit, so a request that escaped its estimate would end here with exit 1 (out of memory) or a
// signal, which fails the test by itself. Each case failed before the bounds: exit 1 after
// gigabytes, a loop that never ended, or a message about something else.
//
// The refusals give --max-memory explicitly, so that they do not depend on the machine's memory;
// the default bound is checked where the address-space limit sets it.
#include "cli_runner.hpp"

#include <gtest/gtest-spi.h>
#include <gtest/gtest.h>

#include <chrono>
#include <csignal>
#include <cstdlib>
#include <thread>

using namespace rastrum::testing;

namespace {

bool says(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

std::string quoted(const std::string& path) { return "'" + path + "'"; }

// Four labelled conditions of 30 trials of 0.5 s, one unit (the README's stiminfo example).
std::string conditions_recording() {
    static const std::string path = [] {
        const std::string p = fresh_folder("bounds-shared") + "/c.h5";
        const auto r = run_rastrum("synth conditions --out " + quoted(p) + " --duration-s 0.5 --means 2,4,6,9");
        EXPECT_EQ(r.exit_code, 0) << r.err;
        return p;
    }();
    return path;
}

// The estimate a refusal states ("needs about 242 MiB"), in MiB, or -1.
double stated_mib(const std::string& err) {
    const auto at = err.find("needs about ");
    if (at == std::string::npos) return -1;
    char* end = nullptr;
    const double value = std::strtod(err.c_str() + at + 12, &end);
    const std::string unit(end, end + 4);
    return unit == " KiB" ? value / 1024 : unit == " MiB" ? value : unit == " GiB" ? value * 1024 : unit == " TiB" ? value * 1048576 : -1;
}

}  // namespace

TEST(bounds, a_word_longer_than_64_letters_is_refused_before_any_letter_exists) {
    // 500 ms in 1e-9 ms bins is 5e11 letters per trial: it used to allocate until it died (exit 1).
    const std::string folder = fresh_folder("bounds-word");
    for (const char* bin: {"1e-9", "1e-5", "1e-300"}) {
        const auto r = run_rastrum("stiminfo " + quoted(conditions_recording()) + " --code word --binary --window-ms 0:500 "
                                   "--bin-ms " + bin + " --quiet --json " + quoted(folder + "/w.json"));
        EXPECT_EQ(r.exit_code, 4) << bin << ": " << r.err;
        EXPECT_TRUE(says(r.err, "--window-ms 0:500") && says(r.err, "--bin-ms") && says(r.err, "at most 64")) << r.err;
        EXPECT_FALSE(says(r.err, "wider than")) << "a fine bin is not a wide one: " << r.err;
        EXPECT_FALSE(file_exists(folder + "/w.json"));
    }
    // 500 ms / 64 = 7.8125 ms is the finest binary word that fits, as the message says.
    const auto fits = run_rastrum("stiminfo " + quoted(conditions_recording()) +
                                  " --code word --binary --window-ms 0:500 --bin-ms 7.8125 --null-shuffles 5 --bootstrap 0 --quiet");
    EXPECT_EQ(fits.exit_code, 0) << fits.err;
}

TEST(bounds, latency_bins_are_counted_before_binning) {
    // 1e-9 ms bins across 500 ms are 5e11 latency bins: no letter is held, so it runs; 1e-300 ms
    // bins cannot be numbered (it used to say "--bin-ms is wider than the window").
    const auto fine = run_rastrum("stiminfo " + quoted(conditions_recording()) +
                                  " --code latency --window-ms 0:500 --bin-ms 1e-9 --null-shuffles 5 --bootstrap 0 --quiet");
    EXPECT_EQ(fine.exit_code, 0) << fine.err;
    const auto absurd = run_rastrum("stiminfo " + quoted(conditions_recording()) +
                                    " --code latency --window-ms 0:500 --bin-ms 1e-300 --quiet");
    EXPECT_EQ(absurd.exit_code, 4) << absurd.err;
    EXPECT_TRUE(says(absurd.err, "--bin-ms 1e-300") && says(absurd.err, "2^53")) << absurd.err;
    EXPECT_FALSE(says(absurd.err, "wider than")) << absurd.err;
}

TEST(bounds, sliding_windows_are_counted_before_they_are_made) {
    // A step of 1e-9 ms made 4.9e11 windows one by one (exit 1), and a step below the start's
    // resolution never advanced; 1 us steps make 490001 records, hours of work and GiBs of results.
    for (const char* slide: {"10:1e-9", "10:1e-300", "10:0.001"}) {
        const auto r = run_rastrum_limited("stiminfo " + quoted(conditions_recording()) + " --code count --window-ms 0:500 "
                                           "--slide-ms " + slide + " --null-shuffles 0 --bootstrap 0 --quiet --max-memory 1G",
                                           60, default_memory_kib);
        EXPECT_EQ(r.exit_code, 4) << slide << ": " << r.err;
        EXPECT_TRUE(says(r.err, std::string("--slide-ms ")) && says(r.err, "windows") && says(r.err, "--max-memory 1 GiB"))
            << r.err;
    }
}

TEST(bounds, direct_refuses_what_its_letters_and_words_cannot_hold) {
    const std::string file = quoted(conditions_recording());
    // 120 trials of 0.5 s at 1e-5 ms are 6e9 bins: more words than the counting numbers (2^32).
    const auto words = run_rastrum("direct " + file + " --bin-ms 1e-5 --letters 1-2 --quiet");
    EXPECT_EQ(words.exit_code, 4) << words.err;
    EXPECT_TRUE(says(words.err, "--bin-ms 1e-05") && says(words.err, "2^32")) << words.err;
    // At 0.001 ms, 6e7 bins of 4-byte letters: about 240 MiB, which 100 MiB cannot hold and 1 GiB can.
    const auto tight = run_rastrum("direct " + file + " --bin-ms 0.001 --letters 1-2 --threads 1 --quiet --max-memory 100M");
    EXPECT_EQ(tight.exit_code, 4) << tight.err;
    EXPECT_TRUE(says(tight.err, "--bin-ms 0.001") && says(tight.err, "--max-memory 100 MiB")) << tight.err;
    EXPECT_GT(stated_mib(tight.err), 229) << "6e7 letters of 4 bytes are 229 MiB: " << tight.err;
    const auto roomy = run_rastrum("direct " + file + " --bin-ms 0.001 --letters 1-2 --threads 1 --quiet --max-memory 1G");
    EXPECT_EQ(roomy.exit_code, 0) << roomy.err;
    // Null rotations hold a rotated copy of the letters: the estimate grows by about their size.
    const auto rotated = run_rastrum("direct " + file + " --bin-ms 0.001 --letters 1-2 --threads 1 --quiet --max-memory 100M "
                                     "--null-rotations 3");
    EXPECT_EQ(rotated.exit_code, 4) << rotated.err;
    EXPECT_GT(stated_mib(rotated.err), stated_mib(tight.err) + 200) << rotated.err;
    // Results grow with units x bin widths x word lengths.
    const auto results = run_rastrum("direct " + file + " --bin-ms 2 --letters 1-100000 --quiet --max-memory 1G");
    EXPECT_EQ(results.exit_code, 4) << results.err;
    EXPECT_TRUE(says(results.err, "--letters 1-100000")) << results.err;
}

TEST(bounds, stiminfo_counts_its_null_bootstrap_and_threads) {
    const std::string file = quoted(conditions_recording());
    // 2 x 10^6 values of 8 bytes: about 15 MiB.
    const auto resamples = run_rastrum("stiminfo " + file + " --code count --window-ms 0:500 --null-shuffles 1000000 "
                                       "--bootstrap 1000000 --quiet --threads 1 --max-memory 10M");
    EXPECT_EQ(resamples.exit_code, 4) << resamples.err;
    EXPECT_TRUE(says(resamples.err, "--null-shuffles 1000000 and --bootstrap 1000000")) << resamples.err;
    EXPECT_GT(stated_mib(resamples.err), 15.2) << resamples.err;
    // Each thread holds a task of its own.
    const auto one = run_rastrum("stiminfo " + file + " --code count --window-ms 0:500 --threads 1 --quiet --max-memory 1K");
    const auto two = run_rastrum("stiminfo " + file + " --code count --window-ms 0:500 --threads 2 --quiet --max-memory 1K "
                                 "--slide-ms 250:250");
    EXPECT_EQ(one.exit_code, 4);
    EXPECT_EQ(two.exit_code, 4);
    EXPECT_TRUE(says(two.err, "held by each of 2 threads")) << two.err;
}

TEST(bounds, a_population_gets_what_the_bound_leaves_for_its_joint_responses) {
    // Three units of 500 trials per condition with 10-30 distinct counts each: some 5e4 joint
    // responses for the independent-units information, which 10 MiB cannot hold and 40 MiB can.
    const std::string folder = fresh_folder("bounds-population");
    const std::string file = quoted(folder + "/pop.h5");
    ASSERT_EQ(run_rastrum("synth conditions --out " + file + " --duration-s 1 --trials-per-condition 500 "
                          "--means 20,40,60,90 --means 30,10,30,10 --means 5,5,5,5").exit_code, 0);
    const std::string analysis = "stiminfo " + file + " --window-ms 0:1000 --code count --population u1,u2,u3 --threads 1 "
                                 "--bootstrap 0 --null-shuffles 0 --surrogates 0 --quiet --max-memory ";
    const auto tight = run_rastrum(analysis + "10M");
    EXPECT_EQ(tight.exit_code, 4) << tight.err;
    EXPECT_TRUE(says(tight.err, "--population u1,u2,u3") && says(tight.err, "joint responses") &&
                says(tight.err, "--max-memory 10 MiB")) << tight.err;
    EXPECT_EQ(run_rastrum(analysis + "40M").exit_code, 0);
}

TEST(bounds, max_memory_is_a_size_with_its_unit) {
    const std::string file = quoted(conditions_recording());
    for (const char* size: {"100", "-5G", "8X", "0G", "G", "1e400G"}) {
        const auto r = run_rastrum("direct " + file + " --bin-ms 2 --letters 1-2 --quiet --max-memory " + size);
        EXPECT_EQ(r.exit_code, 2) << size << ": " << r.err;
        EXPECT_TRUE(says(r.err, "--max-memory")) << r.err;
    }
    for (const char* size: {"512M", "1.5GiB", "2g", "1T"}) {
        EXPECT_EQ(run_rastrum("direct " + file + " --bin-ms 2 --letters 1-2 --quiet --max-memory " + size).exit_code, 0) << size;
    }
    for (const char* command: {"direct", "stiminfo"}) {
        const auto help = run_rastrum(std::string(command) + " --help");
        EXPECT_TRUE(says(help.out, "--max-memory") && says(help.out, "exit 4")) << help.out;
    }
}

#ifndef RASTRUM_SANITIZED
TEST(bounds, the_default_bound_is_half_of_the_address_space_limit) {
    // Under cli_runner's 2 GiB limit the default is 1 GiB: 3e8 letters (1.1 GiB) are refused with
    // the limit named, where they used to be attempted and run out of memory.
    const auto r = run_rastrum("direct " + quoted(conditions_recording()) + " --bin-ms 0.0002 --letters 1-2 --threads 1 --quiet");
    EXPECT_EQ(r.exit_code, 4) << r.err;
    EXPECT_TRUE(says(r.err, "--max-memory's default of 1 GiB (half of 2 GiB, the address-space limit")) << r.err;
}
#endif

TEST(bounds, the_runner_fails_a_run_that_ends_by_a_signal) {
    // The check every CLI test relies on: a run killed by a signal fails the test unless it was provoked.
    EXPECT_NONFATAL_FAILURE(
        {
            const auto run = start_rastrum("stiminfo " + quoted(conditions_recording()) +
                                           " --code count --window-ms 0:500 --slide-ms 10:1 --quiet");
            std::this_thread::sleep_for(std::chrono::milliseconds(200));
            ::kill(run.pid, SIGKILL);
            EXPECT_EQ(finish_rastrum(run).exit_code, 128 + SIGKILL);
        },
        "ended with a signal");
}
