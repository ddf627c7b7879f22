package dev.interim.cli;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.StreamWriteFeature;
import com.fasterxml.jackson.databind.SerializationFeature;
import com.fasterxml.jackson.databind.json.JsonMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.interim.sequential.Effect;
import dev.interim.sequential.Look;
import dev.interim.sequential.SampleSizePlan;
import dev.interim.text.Numbers;
import java.io.PrintWriter;
import java.io.UncheckedIOException;
import java.math.BigDecimal;
import java.util.List;

/**
 * The plan as one JSON object: {@code design}, {@code power} (with {@code --power}),
 * {@code sample_size} (with an effect) and {@code looks}, whose members are the CSV columns
 * ({@link LookField}), null where a boundary is absent.
 */
final class PlanJson {
    private static final JsonMapper MAPPER = JsonMapper.builder()
            .enable(SerializationFeature.INDENT_OUTPUT)
            .enable(StreamWriteFeature.WRITE_BIGDECIMAL_AS_PLAIN)
            .build();
    private static final int DECIMALS = 6;

    private PlanJson() {}

    static void write(PlanReport report, PrintWriter out) {
        try {
            out.println(MAPPER.writeValueAsString(tree(report)));
        } catch (JsonProcessingException e) {
            throw new UncheckedIOException(e);
        }
        out.flush();
    }

    static ObjectNode tree(PlanReport report) {
        ObjectNode root = MAPPER.createObjectNode();
        root.set("design", design(report));
        if (report.power() != null) {
            ObjectNode power = root.putObject("power");
            power.put("power", Numbers.given(report.power().power()));
            power.put("inflation", Numbers.rounded(report.power().inflation(), DECIMALS));
            power.put("drift", Numbers.rounded(report.power().drift(), DECIMALS));
        }
        if (report.sized()) {
            root.set("sample_size", sampleSize(report));
        }
        ArrayNode looks = root.putArray("looks");
        List<LookField> fields = LookField.of(report);
        for (Look look : report.looks()) {
            ObjectNode row = looks.addObject();
            for (LookField field : fields) {
                put(row, field.name(), field.value().apply(look));
            }
        }
        return root;
    }

    private static ObjectNode design(PlanReport report) {
        PlanRequest request = report.request();
        ObjectNode design = MAPPER.createObjectNode();
        design.put("alpha", Numbers.given(request.alpha()));
        design.put("sides", request.sides());
        design.put("direction", request.direction());
        design.put("spending", request.efficacy().label());
        if (report.design().classic() != null) {
            design.put("classic_constant", Numbers.rounded(report.design().classic().constant(), DECIMALS));
        }
        ArrayNode fractions = design.putArray("fractions");
        for (double t : request.fractions()) {
            fractions.add(Numbers.rounded(t, DECIMALS));
        }
        if (report.hasFutility()) {
            ObjectNode futility = design.putObject("futility");
            futility.put("spending", report.design().futility().spending().label());
            futility.put("beta", Numbers.rounded(report.design().futility().beta(), DECIMALS));
            futility.put("binding", false);
        } else {
            design.putNull("futility");
        }
        return design;
    }

    private static ObjectNode sampleSize(PlanReport report) {
        SampleSizePlan plan = report.sampleSize();
        ObjectNode size = MAPPER.createObjectNode();
        ObjectNode effect = size.putObject("effect");
        Effect e = report.request().effect();
        if (e instanceof Effect.MeanDifference m) {
            effect.put("kind", "mean_difference");
            effect.put("difference", Numbers.given(m.delta()));
            effect.put("sd", Numbers.given(m.sd()));
        } else if (e instanceof Effect.ProportionDifference p) {
            effect.put("kind", "proportion_difference");
            effect.put("baseline_rate", Numbers.given(p.baseline()));
            effect.put("difference", Numbers.given(p.delta()));
        }
        size.put("fixed_per_arm", plan.fixedPerArm());
        size.put("inflation", Numbers.rounded(plan.inflation(), DECIMALS));
        size.put("maximum_per_arm", plan.maximumPerArm());
        size.put("expected_per_arm_no_effect", Numbers.rounded(plan.expectedUnderNull(), DECIMALS));
        size.put("expected_per_arm_at_effect", Numbers.rounded(plan.expectedUnderAlternative(), DECIMALS));
        return size;
    }

    private static void put(ObjectNode row, String name, Number value) {
        if (value == null) {
            row.putNull(name);
        } else if (value instanceof BigDecimal d) {
            row.put(name, d);
        } else {
            row.put(name, value.longValue());
        }
    }
}
