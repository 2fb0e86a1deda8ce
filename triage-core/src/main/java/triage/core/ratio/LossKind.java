package triage.core.ratio;

/**
 * Training loss of the density-ratio model.
 *
 * <p>With reference events i (weights w_i normalised so that Σ w_i = N_exp, the expected
 * observed count) and observed events j:
 * <ul>
 *   <li>{@link #EXTENDED_LIKELIHOOD}: L(θ) = Σ_i w_i (e^{f(x_i)} − 1) − Σ_j f(x_j). Its population
 *       minimiser is f = log[n_obs(x)/n_ref(x)] with n_obs normalised to N_obs and n_ref to N_exp.
 *       The test statistic is t = −2 min_θ L.</li>
 *   <li>{@link #BINARY_CROSS_ENTROPY}: weighted cross entropy with observed events labelled 1
 *       (weight 1 each, total N_obs) and reference events labelled 0 with class-balanced weights
 *       w_i^B = w_i · N_obs / N_exp (total N_obs):
 *       L_B(θ) = Σ_i w_i^B softplus(g(x_i)) + Σ_j softplus(−g(x_j)), softplus(u) = log(1 + e^u).
 *       The population minimiser is σ(g) = n_obs / (n_obs + n_ref^B) with n_ref^B = n_ref N_obs/N_exp,
 *       hence g = log(n_obs/n_ref) − log(N_obs/N_exp) and the model's log ratio is
 *       <b>f(x) = g(x) + log(N_obs / N_exp)</b> (zero shift when N_exp = N_obs). The reported test
 *       statistic plugs this f into the extended loss: t = −2 L_ext(f).</li>
 * </ul>
 */
public enum LossKind {
  /** Extended (Poisson) likelihood-ratio loss; the network output is the log ratio. */
  EXTENDED_LIKELIHOOD,
  /** Class-balanced weighted binary cross entropy; the log ratio is the logit plus a constant. */
  BINARY_CROSS_ENTROPY
}
