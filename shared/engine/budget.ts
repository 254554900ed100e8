// GUM (JCGM 100:2008) law of propagation for a product/quotient y = k·Π x_i^e_i with uncorrelated inputs.
import type { BudgetRow } from '../schemas/run-document';

export interface BudgetInput {
  name: string;
  value: number;
  u: number;
  /** exponent of the input in the product */
  exponent: number;
}

/** Rows with sensitivity ∂y/∂x = e·y/x and contribution |∂y/∂x|·u, and the combined standard uncertainty. */
export function productBudget(y: number, inputs: BudgetInput[]): { u: number; budget: BudgetRow[] } {
  let u2 = 0;
  const budget: BudgetRow[] = inputs.map((x) => {
    const sensitivity = (x.exponent * y) / x.value;
    const contribution = Math.abs(sensitivity) * x.u;
    u2 += contribution * contribution;
    return { name: x.name, value: x.value, u: x.u, sensitivity, contribution };
  });
  return { u: Math.sqrt(u2), budget };
}
