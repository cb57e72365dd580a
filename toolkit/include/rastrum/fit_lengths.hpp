#pragma once
/// Which word lengths enter the direct method's extrapolation to infinite word length (the 1/L fit),
/// and how far words must be grown to know it.
///
/// The direct method grows words length by length. Growing and counting long words is most of its
/// work, and most answers rest on short ones, so after each length it asks the rule in force one
/// question: can any longer length still enter the fit? When the answer is no, it stops; the lengths
/// not computed could not have changed the fit range, and so nothing that is computed from it.
///
/// A rule supplies that answer from the lengths computed so far, and only from them. The sampling rule
/// (notes/methods.md, section 4.3) fits the upper half of the longest run of well-sampled lengths
/// from the shortest on, so the first length that is not well sampled ends the run: nothing longer
/// can enter. A user's `--fit-letters A-B` ends at B. A future rule (for example one that judges
/// each length by a calibrated error) supplies the same question as a property of its own: if it can
/// tell that no longer length will qualify (the error only grows with L, say), it answers no there;
/// if it cannot tell before it has seen every length, it answers yes, and every length asked for is
/// computed (slower, never wrong).
#include <rastrum/direct_method.hpp>

#include <string>
#include <utility>
#include <vector>

namespace rastrum {

/// The fit range the rule chose, with the cautions that go with the choice.
struct fit_choice {
    std::pair<int, int> letters{0, 0};
    bool from_user = false;
    std::vector<std::string> warnings;
};

class fit_length_rule {
public:
    /// `settings` must have passed check_direct_settings.
    explicit fit_length_rule(const direct_settings& settings): settings_(settings) {}

    /// Asked after each computed length, `computed` holding every length from letters_min on, in
    /// order: can a length longer than the last one still enter the fit? (The longest length asked
    /// for, letters_max, is a ceiling the caller applies.)
    bool longer_length_may_enter(const std::vector<letters_estimate>& computed) const;

    /// Why a `false` from longer_length_may_enter: the stop's name in the output.
    length_stop stop_reason() const {
        return settings_.fit_letters ? length_stop::fit_letters : length_stop::sampling_rule;
    }

    /// The fit range from the computed lengths (which must reach as far as the rule needed), with its
    /// cautions: the rule failing even at the shortest length, a rate from a single length, a user's
    /// range holding undersampled lengths.
    fit_choice choose(const std::vector<letters_estimate>& computed) const;

private:
    const direct_settings& settings_;
};

}  // namespace rastrum
