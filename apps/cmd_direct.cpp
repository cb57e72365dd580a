#include "command_line.hpp"
#include "commands.hpp"

#include "progress_display.hpp"

#include <rastrum/curves_output.hpp>
#include <rastrum/direct_results.hpp>
#include <rastrum/errors.hpp>

#include <iostream>

namespace rastrum::app {

int run_direct(int argc, char** argv) {
    const direct_request defaults;
    std::string file, bin_text, letters_text, fit_text, stimulus, subset_text;
    shared_options shared;
    std::string splits_text = std::to_string(defaults.settings.splits), seed_text = std::to_string(defaults.settings.seed),
                threads_text = "0", rotations_text = "0",
                surrogates_text = std::to_string(defaults.settings.surrogates),
                surrogate_splits_text = std::to_string(defaults.settings.surrogate_splits);
    direct_request request;
    po::options_description options("Options");
    options.add_options()
        ("unit", po::value(&request.units)->composing(), "analyse this unit (repeat for several); every unit when absent")
        ("stimulus", po::value(&stimulus), "only trials with this stimulus label (the frozen stimulus); all trials when absent")
        ("bin-ms", po::value(&bin_text)->required(), "bin width(s) in ms, comma-separated, e.g. 1,2,4")
        ("letters", po::value(&letters_text)->required(), "word lengths A-B in letters (bins), e.g. 1-12; a single A means A-A")
        ("binary", po::bool_switch(&request.binary), "clip letters to 0/1 (spike or no spike) instead of spike counts")
        ("fit-letters", po::value(&fit_text),
         "word lengths A-B for the extrapolation to infinite word length; by default the range the calibration "
         "chooses (see --surrogates), or with --surrogates 0 the upper half of the well-sampled lengths (see "
         "--bias-tolerance)")
        ("every-length", po::bool_switch(&request.settings.every_length),
         "compute every word length of --letters; by default lengths stop at the first one after which no longer "
         "length can enter the extrapolation to infinite word length (the rates are the same; the curves in 1/L "
         "then show the longer, undersampled lengths too)")
        ("bias-tolerance", number_value(&request.settings.bias_tolerance),
         "sampling rule (with --surrogates 0): a word length is well sampled when the extrapolations from plug-in and from jackknife "
         "estimates agree on its information within this fraction of it (or of twice its standard error, if larger)")
        ("subset-estimator", po::value(&subset_text)->default_value(subset_estimator_name(defaults.settings.subsets)),
         "entropy estimator on each subset of trials before the extrapolation to infinite data: plug-in, miller-madow or jackknife")
        ("splits", po::value(&splits_text)->default_value(splits_text),
         "random nested splits of the trials (halves, quarters, eighths) for the extrapolation and the interval")
        ("null-rotations", po::value(&rotations_text)->default_value(rotations_text),
         "repeat the estimate on N copies of the data with each trial rotated in time by a random offset (which "
         "removes the information but keeps each trial's statistics): reports the null mean, the null-subtracted "
         "rate and a permutation p-value; costs N extra estimates")
        ("surrogates", po::value(&surrogates_text)->default_value(surrogates_text),
         "calibrate each estimate at its own sample size on N surrogate data sets drawn from a model fitted to the "
         "record (its firing time course and bin-to-bin dependence, with exactly known answers): the rate is "
         "corrected by the measured bias, its interval follows the measured error, and the word lengths of the "
         "fit are chosen by that error (longer words whenever within --error-tolerance); at least 2; 0 turns it "
         "off and gives the plain method with its sampling rule; costs about N extra estimates, grown to longer "
         "words (notes/methods-calibration.md)")
        ("surrogate-splits", po::value(&surrogate_splits_text)->default_value(surrogate_splits_text),
         "random nested splits of the trials in each surrogate's estimate")
        ("error-tolerance", number_value(&request.settings.error_tolerance),
         "calibration: a fit range is within tolerance when its calibrated error is at most this fraction of the "
         "rate (or --error-floor bits per spike, if larger)")
        ("error-floor", number_value(&request.settings.error_floor_bits_per_spike),
         "calibration: the smallest error tolerance, in bits per spike (times the mean firing rate)")
        ("seed", po::value(&seed_text)->default_value(seed_text), "seed of the random splits (a whole number)")
        ("threads", po::value(&threads_text)->default_value(threads_text),
         "worker threads (0: one per core); results do not depend on it");
    add_shared_options(options, shared, "one row per unit, bin width and word length");
    input_options input;
    add_input_options(options, input);
    po::variables_map vm;
    if (!parse_command(argc, argv, "direct",
                       "FILE [input options] --bin-ms B[,B...] --letters A-B [--unit ID]... [--stimulus LABEL] [--binary] "
                       "[--fit-letters A-B] [--trials LIST] [--exclude-trials LIST] [--seed N] [--threads N] [--json OUT] [--csv OUT] "
                       "[--curves-csv OUT] [--h5 OUT]",
                       options, {{"file", "FILE", recording_file_meaning, &file}}, vm)) {
        return 0;
    }
    request.bin_ms = parse_number_list(bin_text, "--bin-ms");
    request.settings.splits = static_cast<unsigned>(parse_whole_number(splits_text, "--splits", 2, 1000));
    request.settings.seed = parse_whole_number(seed_text, "--seed", 0, UINT64_MAX);
    request.threads = static_cast<unsigned>(parse_whole_number(threads_text, "--threads", 0, 1024));
    request.settings.surrogates = static_cast<unsigned>(parse_whole_number(surrogates_text, "--surrogates", 0, 10000));
    request.settings.surrogate_splits =
        static_cast<unsigned>(parse_whole_number(surrogate_splits_text, "--surrogate-splits", 2, 1000));
    request.null_rotations = static_cast<unsigned>(parse_whole_number(rotations_text, "--null-rotations", 0, 100000));
    std::tie(request.settings.letters_min, request.settings.letters_max) = parse_int_range(letters_text, "--letters");
    if (vm.count("fit-letters")) request.settings.fit_letters = parse_int_range(fit_text, "--fit-letters");
    if (vm.count("stimulus")) request.stimulus = stimulus;
    request.settings.subsets = parse_subset_estimator(subset_text);
    request.trials = trials_of(shared);
    request.max_memory = max_memory_of(shared);
    check_direct_request(request);
    const recording_source source = source_of(file, input);
    const output_choice out = choose_outputs(shared, vm, source_files(source));
    return analyse_and_write(argc, argv, source, request.threads, out, [&](const recording& rec, provenance& origin) {
        const auto records = with_progress(parse_progress_style(out.progress), out.quiet, "direct", request.progress,
                                           [&] { return run_direct(rec, request); });
        origin.finished_utc = utc_now();
        return render_results(direct_json(records, request, origin), direct_curves(records), "direct", direct_csv(records),
                              direct_table(records, request));
    });
}

}  // namespace rastrum::app
