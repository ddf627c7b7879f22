package dev.interim.simulate;

import dev.interim.text.Numbers;
import java.io.PrintWriter;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.StringJoiner;

/**
 * The report as CSV: one row per comparison and effect. Probabilities and expectations come with
 * their Monte Carlo standard errors ({@code _se}) and, where computed, the recursion's value
 * ({@code recursion_}); each stopping-look quantile with its 95% Monte Carlo interval
 * ({@code _low}, {@code _high}); {@code stopped_by_look} lists the runs that stopped at looks 1..K,
 * separated by ';'. Empty cells mean "not computed". Names are letters, digits, '_', '-' and '.', so
 * no cell needs quoting.
 */
final class ReportCsv {
    private ReportCsv() {}

    static List<String> header() {
        List<String> h = new ArrayList<>(List.of("experiment", "arm", "metric", "role", "worse", "alternative",
                "spending", "futility", "alpha", "looks", "runs", "stream", "drift", "effect", "direction",
                "reject", "reject_se", "recursion_reject"));
        for (Stop s : Stop.values()) {
            String name = s.label().replace('-', '_');
            h.addAll(List.of(name, name + "_se", "recursion_" + name));
        }
        h.addAll(List.of("expected_fraction", "expected_fraction_se", "recursion_expected_fraction",
                "expected_time_fraction", "expected_look", "expected_look_se"));
        for (double q : OperatingCharacteristics.QUANTILES) {
            String name = "look_q" + Math.round(q * 100);
            h.addAll(List.of(name, name + "_low", name + "_high"));
        }
        h.add("stopped_by_look");
        return h;
    }

    static void write(SimulationReport report, PrintWriter out) {
        out.println(String.join(",", header()));
        for (SimulationReport.ComparisonResult result : report.comparisons()) {
            SimulatedComparison c = result.comparison();
            for (SimulationReport.EffectResult e : result.effects()) {
                out.println(String.join(",", row(report, c, e)));
            }
        }
        out.flush();
    }

    private static List<String> row(SimulationReport report, SimulatedComparison c, SimulationReport.EffectResult e) {
        OperatingCharacteristics oc = e.simulated();
        RecursionCharacteristics exact = e.recursion();
        List<String> r = new ArrayList<>(List.of(c.experiment(), c.arm(), c.metric().name(), Descriptions.role(c),
                Descriptions.worse(c), Descriptions.alternative(c), c.design().efficacyLabel(), Descriptions.futility(c),
                Numbers.plain(c.alpha()), String.valueOf(c.lookCount()), String.valueOf(report.runs()),
                String.valueOf(report.stream()), Numbers.rounded(e.effect().drift(), 6).toPlainString(),
                e.effect().inMetricUnits() == null ? "" : Numbers.cell(e.effect().inMetricUnits(), 6),
                e.effect().direction()));
        r.addAll(estimate(oc.rejection(), exact == null ? Double.NaN : exact.rejection()));
        Map<Stop, Estimate> p = oc.probabilities();
        for (Stop s : Stop.values()) {
            r.addAll(estimate(p.get(s), exact == null ? Double.NaN : exact.probabilities().get(s)));
        }
        r.addAll(estimate(oc.expectedFraction(), exact == null ? Double.NaN : exact.expectedFraction()));
        r.add(Numbers.cell(oc.expectedFraction().value(), 6));
        r.add(Numbers.cell(oc.expectedLook().value(), 6));
        r.add(Numbers.cell(oc.expectedLook().standardError(), 6));
        for (LookQuantile q : oc.quantiles()) {
            r.addAll(List.of(String.valueOf(q.look()), String.valueOf(q.low()), String.valueOf(q.high())));
        }
        StringJoiner byLook = new StringJoiner(";");
        for (int k = 1; k <= oc.looks(); k++) {
            byLook.add(String.valueOf(oc.stoppedAt(k)));
        }
        r.add(byLook.toString());
        return r;
    }

    private static List<String> estimate(Estimate e, double recursion) {
        return List.of(Numbers.cell(e.value(), 6), Numbers.cell(e.standardError(), 6),
                Numbers.cell(recursion, 6));
    }
}
