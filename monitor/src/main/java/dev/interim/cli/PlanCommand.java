package dev.interim.cli;

import dev.interim.sequential.Effect;
import dev.interim.sequential.Fractions;
import dev.interim.sequential.SpendingFunction;
import dev.interim.stats.Alternative;
import dev.interim.stats.Probabilities;
import dev.interim.text.Numbers;
import dev.interim.text.UserText;
import java.util.Arrays;
import java.util.Locale;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/**
 * {@code interim plan}: the boundaries of a group-sequential design look by look, and with a power
 * and an effect the sample sizes it needs. The options are checked here, with messages that name
 * them; the statistics check their own input again.
 */
@Command(name = "plan",
        mixinStandardHelpOptions = true,
        version = Interim.VERSION,
        sortOptions = false,
        description = {
            "Print the stopping boundaries of a group-sequential design, look by look.",
            "With --power and an effect (--effect with --sd, or --effect with --baseline-rate) it also "
                    + "gives the sample size per arm at each look, the maximum, and the expected size.",
        },
        footerHeading = "%nExamples:%n",
        footer = {
            "  interim plan --alpha 0.025 --sides 1 --looks 5",
            "  interim plan --spending fixed-pocock --fractions 0.25,0.5,1 --format csv",
            "  interim plan --power 0.8 --baseline-rate 0.1 --effect 0.01",
            "  interim plan --sides 1 --power 0.9 --effect 2 --sd 10 --futility hsd:-2",
        })
public final class PlanCommand implements Callable<Integer> {
    private static final int DEFAULT_LOOKS = 5;
    private static final int MAX_LOOKS = 10_000;

    @Spec
    CommandSpec spec;

    @Option(names = "--alpha", paramLabel = "A", defaultValue = "0.05",
            description = "Total type I error, strictly between 0 and 1 (default: ${DEFAULT-VALUE}).")
    double alpha;

    @Option(names = "--sides", paramLabel = "1|2", defaultValue = "2",
            description = "2 rejects for a difference either way, each side spending half of alpha; "
                    + "1 rejects in one --direction only (default: ${DEFAULT-VALUE}).")
    int sides;

    @Option(names = "--direction", paramLabel = "greater|less",
            description = "One-sided designs: the direction of the effect that rejects, treatment minus "
                    + "control (default: greater).")
    String direction;

    @Option(names = "--spending", paramLabel = "RULE", defaultValue = "obf",
            description = "obf or pocock (Lan-DeMets types), power:RHO (Kim-DeMets), hsd:GAMMA "
                    + "(Hwang-Shih-DeCani), or the classic boundaries for planned looks fixed-pocock "
                    + "and fixed-obf (default: ${DEFAULT-VALUE}).")
    String spending;

    @Option(names = "--looks", paramLabel = "K",
            description = "K equally spaced looks (default: " + DEFAULT_LOOKS + ").")
    Integer looks;

    @Option(names = "--fractions", paramLabel = "T1,T2,...",
            description = "Information fractions of the looks instead of --looks: increasing, positive; "
                    + "a classic design ends at 1. Example: 0.2,0.5,1")
    String fractions;

    @Option(names = "--power", paramLabel = "P",
            description = "Plan for this power: gives the inflation factor, and sample sizes with an effect.")
    Double power;

    @Option(names = "--effect", paramLabel = "D",
            description = "The difference to detect, treatment minus control: of means with --sd, "
                    + "of rates with --baseline-rate. Needs --power.")
    Double effect;

    @Option(names = "--sd", paramLabel = "S", description = "Standard deviation of the metric in each arm.")
    Double sd;

    @Option(names = "--baseline-rate", paramLabel = "P0", description = "Rate of the control arm, strictly between 0 and 1.")
    Double baselineRate;

    @Option(names = "--futility", paramLabel = "RULE",
            description = "Add non-binding futility stops, spending beta (one minus --power) with obf, "
                    + "pocock, power:RHO or hsd:GAMMA. One-sided designs only.")
    String futility;

    @Option(names = "--format", paramLabel = "table|csv|json", defaultValue = "table",
            description = "Output format (default: ${DEFAULT-VALUE}). CSV has the looks only; "
                    + "the table and JSON add the sample-size summary.")
    String format;

    @Override
    public Integer call() {
        PlanFormat output = PlanFormat.parse(format);
        PlanReport report = PlanReport.of(request());
        output.write(report, spec.commandLine().getOut());
        return Interim.OK;
    }

    /** The options, checked and assembled. */
    PlanRequest request() {
        Probabilities.requireOpen(alpha, "--alpha");
        Alternative alternative = alternative();
        EfficacyRule efficacy = EfficacyRule.parse(spending);
        double[] t = fractions();
        if (power != null) {
            Probabilities.requireOpen(power, "--power");
        }
        double alphaPerSide = alternative == Alternative.TWO_SIDED ? alpha / 2 : alpha;
        if (power != null && power <= alphaPerSide) {
            throw new IllegalArgumentException("--power must be above the alpha of one side (" + Numbers.plain(alphaPerSide)
                    + "), got " + Numbers.plain(power) + "; plan for a power such as 0.8 or 0.9");
        }
        return new PlanRequest(alpha, alternative, efficacy, t, power, effect(alternative), futilityRule(alternative));
    }

    private Alternative alternative() {
        if (sides == 2) {
            if (direction != null) {
                throw new IllegalArgumentException("--direction applies to one-sided designs: add --sides 1, or drop --direction");
            }
            return Alternative.TWO_SIDED;
        }
        if (sides != 1) {
            throw new IllegalArgumentException("--sides must be 1 or 2, got " + sides);
        }
        String d = direction == null ? "greater" : direction.strip().toLowerCase(Locale.ROOT);
        return switch (d) {
            case "greater" -> Alternative.GREATER;
            case "less" -> Alternative.LESS;
            default -> throw new IllegalArgumentException("--direction must be greater or less, got " + UserText.quoted(direction));
        };
    }

    private double[] fractions() {
        if (looks != null && fractions != null) {
            throw new IllegalArgumentException("give either --looks or --fractions, not both");
        }
        if (fractions == null) {
            int k = looks == null ? DEFAULT_LOOKS : looks;
            if (k < 1 || k > MAX_LOOKS) {
                throw new IllegalArgumentException("--looks must lie between 1 and " + MAX_LOOKS + ", got " + k);
            }
            return Fractions.equallySpaced(k);
        }
        double[] t;
        try {
            t = Arrays.stream(fractions.split(",", -1)).map(String::strip).mapToDouble(Double::parseDouble).toArray();
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException("--fractions must be numbers separated by commas, such as 0.2,0.5,1; got '"
                    + fractions + "'");
        }
        try {
            Fractions.validate(t);
        } catch (IllegalArgumentException e) {
            throw new IllegalArgumentException("--fractions: " + e.getMessage(), e);
        }
        return t;
    }

    private Effect effect(Alternative alternative) {
        if (effect == null) {
            if (sd != null || baselineRate != null) {
                throw new IllegalArgumentException((sd != null ? "--sd" : "--baseline-rate")
                        + " needs --effect, the difference to detect");
            }
            return null;
        }
        if (power == null) {
            throw new IllegalArgumentException("--effect needs --power, the chance to detect it (such as 0.8 or 0.9)");
        }
        if (sd != null && baselineRate != null) {
            throw new IllegalArgumentException("give --sd (difference of means) or --baseline-rate (difference of rates), not both");
        }
        if (sd == null && baselineRate == null) {
            throw new IllegalArgumentException("--effect needs --sd (difference of means) or --baseline-rate (difference of rates)");
        }
        if (!(effect != 0) || !Double.isFinite(effect)) {
            throw new IllegalArgumentException("--effect must be a non-zero number, got " + Numbers.plain(effect));
        }
        if (sd != null && (!(sd > 0) || !Double.isFinite(sd))) {
            throw new IllegalArgumentException("--sd must be positive, got " + Numbers.plain(sd));
        }
        if (baselineRate != null) {
            Probabilities.requireOpen(baselineRate, "--baseline-rate");
        }
        if (alternative == Alternative.GREATER && !(effect > 0) || alternative == Alternative.LESS && !(effect < 0)) {
            throw new IllegalArgumentException("--effect must be " + (alternative == Alternative.GREATER ? "positive" : "negative")
                    + " for --direction " + (alternative == Alternative.GREATER ? "greater" : "less")
                    + ", got " + Numbers.plain(effect));
        }
        return sd != null ? new Effect.MeanDifference(effect, sd) : new Effect.ProportionDifference(baselineRate, effect);
    }

    private SpendingFunction futilityRule(Alternative alternative) {
        if (futility == null) {
            return null;
        }
        if (alternative == Alternative.TWO_SIDED) {
            throw new IllegalArgumentException("--futility needs a one-sided design: add --sides 1");
        }
        if (power == null) {
            throw new IllegalArgumentException("--futility needs --power: futility spends beta = 1 - power");
        }
        try {
            return SpendingFunction.parse(futility);
        } catch (IllegalArgumentException e) {
            throw new IllegalArgumentException("--futility: " + e.getMessage(), e);
        }
    }
}
