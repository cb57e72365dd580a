#include "command_line.hpp"
#include "commands.hpp"

#include <rastrum/errors.hpp>
#include "progress_display.hpp"

#include <rastrum/curves_output.hpp>
#include <rastrum/stiminfo_results.hpp>

#include <iostream>

namespace rastrum::app {

namespace {
/// "A:B" in ms -> (A, B) in seconds.
std::pair<double, double> parse_ms_pair(const std::string& text, const std::string& option) {
    const auto colon = text.find(':');
    if (colon == std::string::npos) throw usage_error(option + ": expected A:B in ms, got '" + text + "'");
    const auto a = parse_number_list(text.substr(0, colon), option), b = parse_number_list(text.substr(colon + 1), option);
    if (a.size() != 1 || b.size() != 1) throw usage_error(option + ": expected A:B in ms, got '" + text + "'");
    return {a[0] / 1000, b[0] / 1000};
}
}  // namespace

int run_stiminfo(int argc, char** argv) {
    const stiminfo_request defaults;
    stiminfo_request request;
    std::string file, window_text, code_text, bin_text = "10", estimators_text = "all", slide_text, stimuli_text,
                                                   interval_text = info_estimator_name(defaults.interval_estimator),
                                                   shuffles_text = std::to_string(defaults.null_shuffles),
                                                   bootstrap_text = std::to_string(defaults.bootstrap),
                                                   splits_text = std::to_string(defaults.settings.splits), seed_text = "1",
                                                   surrogates_text = std::to_string(defaults.surrogates),
                                                   threads_text = "0";
    shared_options shared;
    std::vector<std::string> stimulus_texts;
    std::vector<std::string> population_texts;
    std::string population_estimator_text = info_estimator_name(defaults.population_estimator);
    po::options_description options("Options");
    options.add_options()
        ("unit", po::value(&request.units)->composing(),
         "analyse this unit (repeat for several); every unit when neither --unit nor --population is given")
        ("population", po::value(&population_texts)->composing(),
         "ID,ID,...: also analyse the joint response of these units (repeat for several populations)")
        ("population-estimator", po::value(&population_estimator_text)->default_value(population_estimator_text),
         "estimator of the population values (joint, sum of singles, synergy, shuffle-corrected)")
        ("window-ms", po::value(&window_text)->required(), "response window A:B in ms after trial start, e.g. 0:500")
        ("code", po::value(&code_text)->required(),
         "response code: count (spikes in the window), word (letters of --bin-ms across the window) or latency "
         "(bin of the first spike; a symbol of its own for none)")
        ("bin-ms", po::value(&bin_text)->default_value(bin_text), "letter width for the word and latency codes, in ms")
        ("binary", po::bool_switch(&request.response.binary), "word code: letters are spike / no spike")
        ("stimuli", po::value(&stimuli_text), "only these labels, comma-separated; every label when absent")
        ("stimulus", po::value(&stimulus_texts)->composing(), "only this label (repeat for several; adds to --stimuli)")
        ("estimators", po::value(&estimators_text)->default_value(estimators_text),
         "comma-separated: plug-in, miller-madow, jackknife, panzeri-treves, quadratic-extrapolation, nsb; or all")
        ("null-shuffles", po::value(&shuffles_text)->default_value(shuffles_text),
         "label permutations for the null mean, the null-subtracted plug-in value and the p-value")
        ("bootstrap", po::value(&bootstrap_text)->default_value(bootstrap_text),
         "resamples of trials within condition for the 95% interval (0 or 1: none)")
        ("interval-estimator", po::value(&interval_text)->default_value(interval_text), "the estimator the envelope interval is for")
        ("surrogates", po::value(&surrogates_text)->default_value(surrogates_text),
         "calibrate each record at its own sample size on N surrogate data sets drawn from a model fitted to it (each "
         "condition's response distribution, moved toward the pooled one so that it keeps the spread across conditions "
         "the data show beyond their noise; its information is exact): every estimator's bias and spread, the "
         "estimator of lowest error (recommended), its bias-corrected value with a 95% interval of +-t errors, "
         "and the trials per condition needed for an error within max(10% of the value, 0.02 bits) from N "
         "surrogates at 2x and 4x the trials; 0 turns it off (the interval is then the envelope); "
         "notes/methods-calibration.md")
        ("slide-ms", po::value(&slide_text), "W:S: instead of one window, windows of W ms in steps of S ms across --window-ms (the time course; one record each, each with its own null and interval)")
        ("splits", po::value(&splits_text)->default_value(splits_text), "quadratic-extrapolation: random stratified splits")
        ("seed", po::value(&seed_text)->default_value(seed_text), "seed of shuffles, resamples and splits (a whole number)")
        ("threads", po::value(&threads_text)->default_value(threads_text), "worker threads (0: one per core); results do not depend on it");
    add_shared_options(options, shared, "one row per record (unit or population, and window) and estimator");
    input_options input;
    add_input_options(options, input);
    po::variables_map vm;
    if (!parse_command(argc, argv, "stiminfo",
                       "FILE [input options] --window-ms A:B --code count|word|latency [--bin-ms B] [--binary] [--unit ID]... [--population ID,ID,...]... "
                       "[--estimators LIST] [--null-shuffles N] [--surrogates N] [--slide-ms W:S] [--trials LIST] [--exclude-trials LIST] [--seed N] [--threads N] "
                       "[--json OUT] [--csv OUT] [--curves-csv OUT] [--h5 OUT]",
                       options, {{"file", "FILE", std::string(recording_file_meaning) + "; its trials need labels", &file}},
                       vm)) {
        return 0;
    }
    const auto window = parse_ms_pair(window_text, "--window-ms");
    request.response.window_start = window.first;
    request.response.window_stop = window.second;
    request.response.code = parse_response_code(code_text);
    const auto bins = parse_number_list(bin_text, "--bin-ms");
    if (bins.size() != 1 || !(bins[0] > 0)) throw usage_error("--bin-ms: expected one positive width in ms, got '" + bin_text + "'");
    request.response.bin_width = bins[0] / 1000;
    if (vm.count("slide-ms")) request.slide = parse_ms_pair(slide_text, "--slide-ms");
    if (vm.count("stimuli")) request.stimuli = parse_text_list(stimuli_text, "--stimuli");
    request.stimuli.insert(request.stimuli.end(), stimulus_texts.begin(), stimulus_texts.end());
    request.trials = trials_of(shared);
    if (estimators_text != "all") {
        request.estimators.clear();
        for (const auto& name: parse_text_list(estimators_text, "--estimators")) request.estimators.push_back(parse_info_estimator(name));
    }
    request.interval_estimator = parse_info_estimator(interval_text);
    request.population_estimator = parse_info_estimator(population_estimator_text);
    for (const auto& text: population_texts) request.populations.push_back(parse_text_list(text, "--population"));
    request.null_shuffles = static_cast<unsigned>(parse_whole_number(shuffles_text, "--null-shuffles", 0, 1000000));
    request.bootstrap = static_cast<unsigned>(parse_whole_number(bootstrap_text, "--bootstrap", 0, 1000000));
    request.settings.splits = static_cast<unsigned>(parse_whole_number(splits_text, "--splits", 1, 1000));
    request.settings.seed = parse_whole_number(seed_text, "--seed", 0, UINT64_MAX);
    request.surrogates = static_cast<unsigned>(parse_whole_number(surrogates_text, "--surrogates", 0, 10000));
    request.threads = static_cast<unsigned>(parse_whole_number(threads_text, "--threads", 0, 1024));
    request.max_memory = max_memory_of(shared);
    check_stiminfo_request(request);
    const recording_source source = source_of(file, input);
    const output_choice out = choose_outputs(shared, vm, source_files(source));
    return analyse_and_write(argc, argv, source, request.threads, out, [&](const recording& rec, provenance& origin) {
        const auto records = with_progress(parse_progress_style(out.progress), out.quiet, "stiminfo", request.progress,
                                           [&] { return run_stiminfo(rec, request); });
        origin.finished_utc = utc_now();
        return render_results(stiminfo_json(records, request, origin), stiminfo_curves(records, request), "stiminfo",
                              stiminfo_csv(records, request), stiminfo_table(records, request));
    });
}

}  // namespace rastrum::app
