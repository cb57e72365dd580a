#include "command_line.hpp"
#include "commands.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/synthetic_files.hpp>

#include <functional>
#include <iostream>

namespace rastrum::app {

int run_synth(int argc, char** argv) {
    std::string kind, out, rates_text = "20", modulation_text = "0.8", labels_text = "a,b,c,d";
    std::vector<std::string> means_text;
    session_shape session;
    std::string seed_text = "1", trials_text = std::to_string(session.trials), per_condition_text = "30";
    double bin_ms = 2.0, correlation_ms = 20.0, resolution_ms = 0.1, refractory = 0.0;
    bool overwrite = false;
    po::options_description options("Options");
    options.add_options()
        ("out", po::value(&out)->required(),
         "the recording to write (NAME.h5); the exact answers go beside it as NAME.answers.json")
        ("overwrite", po::bool_switch(&overwrite), "replace NAME.h5 and NAME.answers.json if they exist")
        ("seed", po::value(&seed_text)->default_value(seed_text), "random seed (a whole number)")
        ("trials", po::value(&trials_text)->default_value(trials_text), "trials (frozen-bins, poisson)")
        ("duration-s", number_value(&session.duration), "trial duration in s")
        ("gap-s", number_value(&session.gap), "time between trials in s")
        ("background-hz", number_value(&session.background_hz), "firing rate between trials (spikes outside every trial)")
        ("rate-hz", po::value(&rates_text)->default_value(rates_text), "mean rate of each unit, comma-separated: one unit per value")
        ("modulation", po::value(&modulation_text)->default_value(modulation_text),
         "one value for all units or one per unit: the coefficient of variation of the spike probability "
         "across bins (frozen-bins) or of the rate over time (poisson)")
        ("bin-ms", number_value(&bin_ms), "frozen-bins: width of the bins in ms")
        ("refractory", number_value(&refractory),
         "frozen-bins: fraction by which a spike lowers the spike probability of the next bin (0..1)")
        ("correlation-ms", number_value(&correlation_ms), "poisson: time constant of the rate's fluctuations")
        ("resolution-ms", number_value(&resolution_ms), "poisson: steps on which the rate is held constant")
        ("labels", po::value(&labels_text)->default_value(labels_text), "conditions: stimulus labels, comma-separated")
        ("trials-per-condition", po::value(&per_condition_text)->default_value(per_condition_text),
         "conditions: trials of each label")
        ("means", po::value(&means_text)->composing(),
         "conditions: mean spike counts of one unit, one per label, comma-separated; repeat for each unit (default 2,4,6,9)");
    po::variables_map vm;
    if (!parse_command(argc, argv, "synth", "KIND --out NAME.h5 [options]", options,
                       {{"kind", "KIND",
                         "frozen-bins (independent or refractory bins with a frozen spike probability), poisson "
                         "(inhomogeneous Poisson firing with a frozen smooth rate) or conditions (discrete stimulus "
                         "conditions with Poisson spike counts)",
                         &kind}},
                       vm)) {
        return 0;
    }
    if (kind != "frozen-bins" && kind != "poisson" && kind != "conditions") {
        throw usage_error("unknown kind '" + kind + "': choose frozen-bins, poisson or conditions");
    }
    const std::uint64_t seed = parse_whole_number(seed_text, "--seed", 0, UINT64_MAX);
    session.trials = parse_whole_number(trials_text, "--trials", 1, 1000000);
    const std::size_t per_condition = parse_whole_number(per_condition_text, "--trials-per-condition", 1, 1000000);
    const output_target recording_target = resolve_output(out, "--out");
    if (!has_hdf5_name(out)) throw usage_error("--out " + out + ": name the recording NAME.h5 (or NAME.hdf5)");
    const output_target answers_target = resolve_output(answers_path_for(out), "--out (its answers file)");
    check_output_targets({recording_target, answers_target}, {});
    refuse_to_replace(recording_target, overwrite);
    refuse_to_replace(answers_target, overwrite);

    nlohmann::ordered_json parameters = {{"kind", kind}, {"seed", seed}, {"duration_s", session.duration},
                                         {"gap_s", session.gap}, {"background_hz", session.background_hz}};
    // Made and written one unit at a time, so a recording larger than memory can be made.
    std::function<synthetic_recording(const unit_ready&)> make;
    if (kind == "frozen-bins" || kind == "poisson") {
        const auto rates = parse_number_list(rates_text, "--rate-hz");
        const auto modulations = parse_number_list(modulation_text, "--modulation");
        parameters["trials"] = session.trials;
        parameters["rate_hz"] = rates;
        parameters["modulation"] = modulations;
        if (kind == "frozen-bins") {
            frozen_bins_spec spec{session, bin_ms, rates, modulations, refractory, seed};
            check_spec(spec);
            parameters["bin_ms"] = bin_ms;
            parameters["refractory"] = refractory;
            make = [spec](const unit_ready& ready) { return make_frozen_bins(spec, ready); };
        } else {
            poisson_spec spec{session, rates, modulations, correlation_ms, resolution_ms, seed};
            check_spec(spec);
            parameters["correlation_ms"] = correlation_ms;
            parameters["resolution_ms"] = resolution_ms;
            make = [spec](const unit_ready& ready) { return make_poisson(spec, ready); };
        }
    } else {
        conditions_spec spec;
        spec.session = session;
        spec.labels = parse_text_list(labels_text, "--labels");
        spec.trials_per_condition = per_condition;
        spec.seed = seed;
        if (!means_text.empty()) {
            spec.means.clear();
            for (const auto& row: means_text) spec.means.push_back(parse_number_list(row, "--means"));
        }
        check_spec(spec);
        parameters["labels"] = spec.labels;
        parameters["trials_per_condition"] = per_condition;
        parameters["means"] = spec.means;
        make = [spec](const unit_ready& ready) { return make_conditions(spec, ready); };
    }
    // Every parameter was checked above (check_spec), and the outputs are made ready before any spike
    // is drawn: nothing is written for a request that fails, and an unwritable output is known at once.
    output_file recording_file(recording_target, output_file::content::by_path), answers_file(answers_target);
    make_and_write_synthetic(make, recording_file, answers_file, parameters);
    std::cerr << "wrote " << out << " and " << answers_path_for(out) << "\n";
    return 0;
}

}  // namespace rastrum::app
