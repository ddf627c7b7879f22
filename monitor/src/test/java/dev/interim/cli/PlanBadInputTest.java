package dev.interim.cli;

import static org.assertj.core.api.Assertions.assertThat;

import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Every bad input exits with 2 and one line on stderr that names the problem, and prints nothing
 * else. No statistical values here: the rules checked (α and power in (0, 1), increasing fractions,
 * known spending names) are common practice for these designs.
 */
class PlanBadInputTest {

    static Stream<Arguments> badInputs() {
        return Stream.of(
                bad("--alpha", new String[] {"--alpha", "1.5"}),
                bad("--alpha", new String[] {"--alpha", "0"}),
                bad("--alpha", new String[] {"--alpha", "-0.05"}),
                bad("--alpha", new String[] {"--alpha", "five"}),
                bad("increase", new String[] {"--fractions", "0.5,0.2,1"}),
                bad("increase", new String[] {"--fractions", "0.5,0.5,1"}),
                bad("positive", new String[] {"--fractions", "-0.2,1"}),
                bad("--fractions", new String[] {"--fractions", "0.2,x,1"}),
                bad("--looks or --fractions", new String[] {"--looks", "3", "--fractions", "0.5,1"}),
                bad("--looks", new String[] {"--looks", "0"}),
                bad("last fraction must be 1", new String[] {"--spending", "fixed-obf", "--fractions", "0.5,0.8"}),
                bad("unknown --spending 'wobble'", new String[] {"--spending", "wobble"}),
                bad("power:RHO", new String[] {"--spending", "power"}),
                bad("RHO", new String[] {"--spending", "power:-1"}),
                bad("--sides must be 1 or 2", new String[] {"--sides", "3"}),
                bad("--sides must be 1 or 2", new String[] {"--sides", "0"}),
                bad("--direction", new String[] {"--direction", "less"}),
                bad("--direction must be greater or less", new String[] {"--sides", "1", "--direction", "up"}),
                bad("--futility needs a one-sided design", new String[] {"--futility", "obf", "--power", "0.9"}),
                bad("--futility needs --power", new String[] {"--sides", "1", "--futility", "obf"}),
                bad("unknown spending function 'fixed-obf'",
                        new String[] {"--sides", "1", "--power", "0.9", "--futility", "fixed-obf"}),
                bad("--effect needs --sd", new String[] {"--power", "0.9", "--effect", "0.5"}),
                bad("--effect needs --power", new String[] {"--effect", "0.5", "--sd", "1"}),
                bad("--sd needs --effect", new String[] {"--power", "0.9", "--sd", "1"}),
                bad("--baseline-rate needs --effect", new String[] {"--power", "0.9", "--baseline-rate", "0.1"}),
                bad("not both", new String[] {"--power", "0.9", "--effect", "0.5", "--sd", "1", "--baseline-rate", "0.1"}),
                bad("--sd must be positive", new String[] {"--power", "0.9", "--effect", "0.5", "--sd", "0"}),
                bad("--baseline-rate", new String[] {"--power", "0.9", "--effect", "0.1", "--baseline-rate", "1.2"}),
                bad("baseline rate + effect", new String[] {"--power", "0.9", "--effect", "0.1", "--baseline-rate", "0.95"}),
                bad("--effect must be positive", new String[] {"--sides", "1", "--power", "0.9", "--effect", "-1", "--sd", "1"}),
                bad("--effect must be a non-zero", new String[] {"--power", "0.9", "--effect", "0", "--sd", "1"}),
                bad("--power", new String[] {"--power", "1"}),
                bad("--power must be above", new String[] {"--power", "0.01"}),
                bad("unknown --format 'xml'", new String[] {"--format", "xml"}),
                bad("--bogus", new String[] {"--bogus"}),
                bad("'--alpha'", new String[] {"--alpha"}));
    }

    private static Arguments bad(String named, String[] options) {
        return Arguments.of(String.join(" ", options), named, options);
    }

    @ParameterizedTest(name = "plan {0}")
    @MethodSource("badInputs")
    void exitsWithTwoAndOneLineNamingTheProblem(String shown, String named, String[] options) {
        Cli.Result r = Cli.plan(options);

        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.out()).isEmpty();
        assertThat(r.errLines()).hasSize(1);
        String line = r.errLines().get(0);
        assertThat(line).startsWith("interim: ").contains(named).endsWith("see 'interim plan --help'");
        assertThat(line).doesNotContain("Exception", "\tat ");
    }
}
