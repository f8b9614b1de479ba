/** Errors of the phone's calculations, mirroring compliance/engineering on the server. */

/** No calculation has this name. */
export class UnknownCalculation extends Error {
  readonly calcName: string;
  constructor(name: string) {
    super(`unknown calculation: '${name}'`);
    this.name = "UnknownCalculation";
    this.calcName = name;
  }
}

/** An input a calculation cannot use; `field` names it and `problem` says why. */
export class CalcInputError extends Error {
  readonly field: string;
  readonly problem: string;
  constructor(field: string, problem: string) {
    super(`${field}: ${problem}`);
    this.name = "CalcInputError";
    this.field = field;
    this.problem = problem;
  }
}

/** A quantity of the working is not a usable number (e.g. an area that underflowed to zero and
 * would divide); `quantity` names it. The calculation answers out_of_range; see inputs.ts. */
export class OutOfRange extends Error {
  readonly quantity: string;
  constructor(quantity: string, shown: string) {
    super(`${quantity} is ${shown}`);
    this.name = "OutOfRange";
    this.quantity = quantity;
  }
}
