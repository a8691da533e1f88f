/** The limits of what a ranking means; printed in the HTML report and the README. */
export const LIMITS_STATEMENT =
  'Rankings on generated model problems guide solver choices but do not certify settings for production '
  + 'simulations. Users confirm on their own matrices, and safety-relevant flow predictions follow their own '
  + 'verification practice and applicable codes.';
