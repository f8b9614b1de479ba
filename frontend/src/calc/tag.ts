/** anchor-tag: the rated capacity on an anchor's tag against its certificate; port of tag.py. */
import { buildResult, calculation, number, type Inputs } from "./inputs";
import { check, type CalcResult, type OutputValue } from "./result";
import { num } from "./working";

const NAME = "anchor-tag";
/** A relative difference below this is binary rounding, not a tag below its certificate. */
const EXACTLY = 1e-9;

const FIELDS = [
  number("tag_kn", "kN", "rated capacity read from the anchor's tag", {
    greaterThan: 0,
    atMost: 1000,
    limitReason: "no roof anchor is rated near 1000 kN: a tag read in another unit",
  }),
  number("certified_kn", "kN", "rated capacity on the anchor's certificate", { greaterThan: 0 }),
  number("rounding", "", "how far below the certificate a tag's rounded figure may read, as a fraction", {
    atLeast: 0,
    atMost: 0.2,
    limitReason: "a larger allowance is not rounding",
  }),
];

function compute(values: Inputs): CalcResult {
  const tagKn = values.number("tag_kn");
  const certifiedKn = values.number("certified_kn");
  const rounding = values.number("rounding");
  const lowestKn = certifiedKn * (1 - rounding);
  const reliedKn = Math.min(tagKn, certifiedKn);
  const steps = [
    `lowest tag figure agreeing with the certificate = ${num(certifiedKn)} kN × (1 - ${num(rounding)}) = ${num(lowestKn)} kN`,
    `tag reads ${num(tagKn)} kN`,
  ];
  if (tagKn > certifiedKn) {
    steps.push(`the tag rates the anchor above its certificate: the certificate's ${num(certifiedKn)} kN governs every margin`);
  }
  let margin = reliedKn / lowestKn - 1;
  // A tag exactly at the lowest agreeing figure came out a hair below it in binary arithmetic.
  if (Math.abs(margin) < EXACTLY) margin = 0;
  const reason =
    margin < 0
      ? `The tag reads ${num(tagKn)} kN but the anchor's certificate in the register rates it ${num(certifiedKn)} kN, and every margin of the day uses the certificate. Check that this is the anchor the register names; until the tag and the certificate agree, the competent person must not let a line be tied to it.`
      : "";
  const outputs: Record<string, OutputValue> = { lowest_agreeing_kn: lowestKn, relied_on_kn: reliedKn };
  const checks = [check("tag_against_certificate", margin, false, { reason })];
  return buildResult({ name: NAME, inputs: values.asDict(), outputs, checks, steps });
}

export const ANCHOR_TAG = calculation(NAME, "Anchor tag against its certificate", FIELDS, [], compute);
