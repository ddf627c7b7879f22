/**
 * Edge: {@code interim simulate}, the operating characteristics of each configured metric's
 * sequential design by Monte Carlo.
 *
 * <p>The model is the canonical joint distribution of group-sequential statistics (Jennison &amp;
 * Turnbull 2000, ch. 3): at information fractions t_1 &lt; … &lt; t_K = 1 the score S_k = Z_k·√t_k
 * has independent normal increments S_k − S_{k−1} ~ N(η·(t_k − t_{k−1}), t_k − t_{k−1}), where the
 * drift η = θ·√I_max is the effect θ over its standard error at the planned maximum information. A
 * run walks one such path through the looks of the comparison's design and stops as the daemon's
 * {@code Comparison} would: rejection (harm or benefit, by the sign of Z), futility, or complete at
 * the final look. Nothing in a run depends on a metric's kind or variance: they are in the
 * information, which is why one drift describes any metric.
 *
 * <p>Reproducible: run r draws from its own generator, fixed by the stream and r alone
 * ({@link dev.interim.simulate.RunStreams}), and every result is a sum of integer counts, so the
 * output is the same whatever the number of threads. Every effect and every metric reuses the same
 * draws of run r (common random numbers), which makes differences between effects smoother.
 */
package dev.interim.simulate;
