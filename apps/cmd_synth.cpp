#include "command_line.hpp"
#include "commands.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/synthetic_files.hpp>

#include <iostream>

namespace rastrum::app {

int run_synth(int argc, char** argv) {
    std::string kind, out, rates_text = "20", modulation_text = "0.8", labels_text = "a,b,c,d";
    std::vector<std::string> means_text;
    session_shape session;
    std::uint64_t seed = 1;
    double bin_ms = 2.0, correlation_ms = 20.0, resolution_ms = 0.1, refractory = 0.0;
    std::size_t per_condition = 30;
    po::options_description options("Options");
    options.add_options()
        ("kind", po::value(&kind)->required(),
         "frozen-bins: independent bins with a frozen spike probability per bin;\n"
         "poisson: inhomogeneous Poisson firing with a frozen smooth rate;\n"
         "conditions: discrete stimulus conditions with Poisson spike counts")
        ("out", po::value(&out)->required(), "the recording to write (HDF5); the exact answers go beside it as NAME.answers.json")
        ("seed", po::value(&seed)->default_value(seed), "random seed")
        ("trials", po::value(&session.trials)->default_value(session.trials), "trials (frozen-bins, poisson)")
        ("duration-s", po::value(&session.duration)->default_value(session.duration), "trial duration in s")
        ("gap-s", po::value(&session.gap)->default_value(session.gap), "time between trials in s")
        ("background-hz", po::value(&session.background_hz)->default_value(session.background_hz),
         "firing rate between trials (spikes outside every trial)")
        ("rate-hz", po::value(&rates_text)->default_value(rates_text), "mean rate of each unit, comma-separated: one unit per value")
        ("modulation", po::value(&modulation_text)->default_value(modulation_text),
         "modulation, one for all units or one per unit: the coefficient of variation of the spike probability across bins (frozen-bins) or of the rate over time (poisson)")
        ("bin-ms", po::value(&bin_ms)->default_value(bin_ms), "frozen-bins: width of the bins in ms")
        ("refractory", po::value(&refractory)->default_value(refractory),
         "frozen-bins: fraction by which a spike lowers the spike probability of the next bin (0..1)")
        ("correlation-ms", po::value(&correlation_ms)->default_value(correlation_ms), "poisson: time constant of the rate's fluctuations")
        ("resolution-ms", po::value(&resolution_ms)->default_value(resolution_ms), "poisson: steps on which the rate is held constant")
        ("labels", po::value(&labels_text)->default_value(labels_text), "conditions: stimulus labels, comma-separated")
        ("trials-per-condition", po::value(&per_condition)->default_value(per_condition), "conditions: trials of each label")
        ("means", po::value(&means_text)->composing(),
         "conditions: mean spike counts of one unit, one per label, comma-separated; repeat for each unit (default 2,4,6,9)");
    po::positional_options_description positional;
    positional.add("kind", 1);
    po::variables_map vm;
    if (!parse_command(argc, argv, "synth", "frozen-bins|poisson|conditions --out FILE [options]", options, positional,
                       vm)) {
        return 0;
    }
    check_output_paths({out, answers_path_for(out)}, {});

    nlohmann::ordered_json parameters = {{"kind", kind}, {"seed", seed}, {"duration_s", session.duration},
                                         {"gap_s", session.gap}, {"background_hz", session.background_hz}};
    synthetic_recording synth;
    if (kind == "frozen-bins" || kind == "poisson") {
        const auto rates = parse_number_list(rates_text, "--rate-hz");
        const auto modulations = parse_number_list(modulation_text, "--modulation");
        parameters["trials"] = session.trials;
        parameters["rate_hz"] = rates;
        parameters["modulation"] = modulations;
        if (kind == "frozen-bins") {
            frozen_bins_spec spec{session, bin_ms, rates, modulations, refractory, seed};
            parameters["bin_ms"] = bin_ms;
            parameters["refractory"] = refractory;
            synth = make_frozen_bins(spec);
        } else {
            poisson_spec spec{session, rates, modulations, correlation_ms, resolution_ms, seed};
            parameters["correlation_ms"] = correlation_ms;
            parameters["resolution_ms"] = resolution_ms;
            synth = make_poisson(spec);
        }
    } else if (kind == "conditions") {
        conditions_spec spec;
        spec.session = session;
        spec.labels = parse_text_list(labels_text, "--labels");
        spec.trials_per_condition = per_condition;
        spec.seed = seed;
        if (!means_text.empty()) {
            spec.means.clear();
            for (const auto& row: means_text) spec.means.push_back(parse_number_list(row, "--means"));
        }
        parameters["labels"] = spec.labels;
        parameters["trials_per_condition"] = per_condition;
        parameters["means"] = spec.means;
        synth = make_conditions(spec);
    } else {
        throw usage_error("unknown kind '" + kind + "': choose frozen-bins, poisson or conditions");
    }
    write_synthetic(synth, out, parameters);
    std::cerr << "wrote " << out << " and " << answers_path_for(out) << "\n";
    return 0;
}

}  // namespace rastrum::app
