/** The caution shown on every screen (and carried by every exported report, which has its own wording). */
export const APP_CAUTION =
  'Factor Triage informs pricing-model decisions. It is not investment advice and does not replace model validation: ' +
  "the choice of model remains subject to your firm's model-risk policy and independent review.";
