/**
 * Test support (not part of the engine): the NIST StRD nonlinear regression models, written from
 * the model line printed in each dataset file, with analytic Jacobians (∂model/∂b), and a builder
 * that turns a dataset and one of its two NIST starting points into a `NonlinearProblem`.
 *
 * Reference: NIST StRD nonlinear regression, https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml.
 */
import type { NonlinearProblem } from './levenberg-marquardt.ts';
import type { NistDataset } from './nist-strd-reader.ts';

type Model = (b: readonly number[], x: number, index: number) => number;
type Gradient = (b: readonly number[], x: number, index: number) => number[];
interface NistModel {
  model: Model;
  jacobian: Gradient;
}

const exponentialRise: NistModel = {
  model: (b, x) => b[0]! * (1 - Math.exp(-b[1]! * x)),
  jacobian: (b, x) => {
    const e = Math.exp(-b[1]! * x);
    return [1 - e, b[0]! * x * e];
  },
};
const chwirut: NistModel = {
  model: (b, x) => Math.exp(-b[0]! * x) / (b[1]! + b[2]! * x),
  jacobian: (b, x) => {
    const d = b[1]! + b[2]! * x;
    const f = Math.exp(-b[0]! * x) / d;
    return [-x * f, -f / d, (-x * f) / d];
  },
};
const lanczos: NistModel = {
  model: (b, x) => b[0]! * Math.exp(-b[1]! * x) + b[2]! * Math.exp(-b[3]! * x) + b[4]! * Math.exp(-b[5]! * x),
  jacobian: (b, x) => {
    const e1 = Math.exp(-b[1]! * x);
    const e2 = Math.exp(-b[3]! * x);
    const e3 = Math.exp(-b[5]! * x);
    return [e1, -b[0]! * x * e1, e2, -b[2]! * x * e2, e3, -b[4]! * x * e3];
  },
};
const gauss: NistModel = {
  model: (b, x) =>
    b[0]! * Math.exp(-b[1]! * x) +
    b[2]! * Math.exp(-((x - b[3]!) ** 2) / b[4]! ** 2) +
    b[5]! * Math.exp(-((x - b[6]!) ** 2) / b[7]! ** 2),
  jacobian: (b, x) => {
    const e = Math.exp(-b[1]! * x);
    const g1 = Math.exp(-((x - b[3]!) ** 2) / b[4]! ** 2);
    const g2 = Math.exp(-((x - b[6]!) ** 2) / b[7]! ** 2);
    return [
      e,
      -b[0]! * x * e,
      g1,
      (b[2]! * g1 * 2 * (x - b[3]!)) / b[4]! ** 2,
      (b[2]! * g1 * 2 * (x - b[3]!) ** 2) / b[4]! ** 3,
      g2,
      (b[5]! * g2 * 2 * (x - b[6]!)) / b[7]! ** 2,
      (b[5]! * g2 * 2 * (x - b[6]!) ** 2) / b[7]! ** 3,
    ];
  },
};
/** (b1 + b2·x + … ) / (1 + b(k+1)·x + …) with `numeratorTerms` numerator coefficients. */
function rational(numeratorTerms: number, parameterCount: number): NistModel {
  const parts = (b: readonly number[], x: number) => {
    let numerator = 0;
    for (let k = numeratorTerms - 1; k >= 0; k--) {
      numerator = numerator * x + b[k]!;
    }
    let denominator = 0;
    for (let k = parameterCount - 1; k >= numeratorTerms; k--) {
      denominator = (denominator + b[k]!) * x;
    }
    return { numerator, denominator: 1 + denominator };
  };
  return {
    model: (b, x) => {
      const { numerator, denominator } = parts(b, x);
      return numerator / denominator;
    },
    jacobian: (b, x) => {
      const { numerator, denominator } = parts(b, x);
      return Array.from({ length: parameterCount }, (_, k) =>
        k < numeratorTerms
          ? x ** k / denominator
          : (-numerator * x ** (k - numeratorTerms + 1)) / denominator ** 2,
      );
    },
  };
}
const twoPi = 2 * Math.PI;

/** Builds `models` lazily so Nelson can read its second predictor by observation index. */
function nistModel(dataset: NistDataset): NistModel {
  const x2 = dataset.predictors[1] ?? [];
  switch (dataset.name) {
    case 'Misra1a':
    case 'BoxBOD':
      return exponentialRise;
    case 'Chwirut1':
    case 'Chwirut2':
      return chwirut;
    case 'Lanczos1':
    case 'Lanczos2':
    case 'Lanczos3':
      return lanczos;
    case 'Gauss1':
    case 'Gauss2':
    case 'Gauss3':
      return gauss;
    case 'DanWood':
      return {
        model: (b, x) => b[0]! * x ** b[1]!,
        jacobian: (b, x) => [x ** b[1]!, b[0]! * x ** b[1]! * Math.log(x)],
      };
    case 'Misra1b':
      return {
        model: (b, x) => b[0]! * (1 - (1 + (b[1]! * x) / 2) ** -2),
        jacobian: (b, x) => {
          const u = 1 + (b[1]! * x) / 2;
          return [1 - u ** -2, b[0]! * x * u ** -3];
        },
      };
    case 'Kirby2':
      return rational(3, 5);
    case 'Hahn1':
    case 'Thurber':
      return rational(4, 7);
    case 'Nelson':
      return {
        model: (b, x, i) => b[0]! - b[1]! * x * Math.exp(-b[2]! * x2[i]!),
        jacobian: (b, x, i) => {
          const e = Math.exp(-b[2]! * x2[i]!);
          return [1, -x * e, b[1]! * x * x2[i]! * e];
        },
      };
    case 'MGH17':
      return {
        model: (b, x) => b[0]! + b[1]! * Math.exp(-x * b[3]!) + b[2]! * Math.exp(-x * b[4]!),
        jacobian: (b, x) => {
          const e4 = Math.exp(-x * b[3]!);
          const e5 = Math.exp(-x * b[4]!);
          return [1, e4, e5, -b[1]! * x * e4, -b[2]! * x * e5];
        },
      };
    case 'Misra1c':
      return {
        model: (b, x) => b[0]! * (1 - (1 + 2 * b[1]! * x) ** -0.5),
        jacobian: (b, x) => {
          const u = 1 + 2 * b[1]! * x;
          return [1 - u ** -0.5, b[0]! * x * u ** -1.5];
        },
      };
    case 'Misra1d':
      return {
        model: (b, x) => (b[0]! * b[1]! * x) / (1 + b[1]! * x),
        jacobian: (b, x) => {
          const u = 1 + b[1]! * x;
          return [(b[1]! * x) / u, (b[0]! * x) / u ** 2];
        },
      };
    case 'Roszman1':
      return {
        model: (b, x) => b[0]! - b[1]! * x - Math.atan(b[2]! / (x - b[3]!)) / Math.PI,
        jacobian: (b, x) => {
          const d = x - b[3]!;
          const u = b[2]! / d;
          const common = 1 / (Math.PI * (1 + u * u));
          return [1, -x, -common / d, (-common * b[2]!) / (d * d)];
        },
      };
    case 'ENSO':
      return {
        model: (b, x) =>
          b[0]! +
          b[1]! * Math.cos((twoPi * x) / 12) +
          b[2]! * Math.sin((twoPi * x) / 12) +
          b[4]! * Math.cos((twoPi * x) / b[3]!) +
          b[5]! * Math.sin((twoPi * x) / b[3]!) +
          b[7]! * Math.cos((twoPi * x) / b[6]!) +
          b[8]! * Math.sin((twoPi * x) / b[6]!),
        jacobian: (b, x) => {
          const c4 = Math.cos((twoPi * x) / b[3]!);
          const s4 = Math.sin((twoPi * x) / b[3]!);
          const c7 = Math.cos((twoPi * x) / b[6]!);
          const s7 = Math.sin((twoPi * x) / b[6]!);
          const k4 = (twoPi * x) / b[3]! ** 2;
          const k7 = (twoPi * x) / b[6]! ** 2;
          return [
            1,
            Math.cos((twoPi * x) / 12),
            Math.sin((twoPi * x) / 12),
            k4 * (b[4]! * s4 - b[5]! * c4),
            c4,
            s4,
            k7 * (b[7]! * s7 - b[8]! * c7),
            c7,
            s7,
          ];
        },
      };
    case 'MGH09':
      return {
        model: (b, x) => (b[0]! * (x * x + x * b[1]!)) / (x * x + x * b[2]! + b[3]!),
        jacobian: (b, x) => {
          const numerator = x * x + x * b[1]!;
          const denominator = x * x + x * b[2]! + b[3]!;
          return [
            numerator / denominator,
            (b[0]! * x) / denominator,
            (-b[0]! * numerator * x) / denominator ** 2,
            (-b[0]! * numerator) / denominator ** 2,
          ];
        },
      };
    case 'Rat42':
      return {
        model: (b, x) => b[0]! / (1 + Math.exp(b[1]! - b[2]! * x)),
        jacobian: (b, x) => {
          const e = Math.exp(b[1]! - b[2]! * x);
          return [1 / (1 + e), (-b[0]! * e) / (1 + e) ** 2, (b[0]! * x * e) / (1 + e) ** 2];
        },
      };
    case 'MGH10':
      return {
        model: (b, x) => b[0]! * Math.exp(b[1]! / (x + b[2]!)),
        jacobian: (b, x) => {
          const e = Math.exp(b[1]! / (x + b[2]!));
          return [e, (b[0]! * e) / (x + b[2]!), (-b[0]! * e * b[1]!) / (x + b[2]!) ** 2];
        },
      };
    case 'Eckerle4':
      return {
        model: (b, x) => (b[0]! / b[1]!) * Math.exp(-0.5 * ((x - b[2]!) / b[1]!) ** 2),
        jacobian: (b, x) => {
          const g = Math.exp(-0.5 * ((x - b[2]!) / b[1]!) ** 2);
          const f = (b[0]! / b[1]!) * g;
          return [
            g / b[1]!,
            -f / b[1]! + (f * (x - b[2]!) ** 2) / b[1]! ** 3,
            (f * (x - b[2]!)) / b[1]! ** 2,
          ];
        },
      };
    case 'Rat43':
      return {
        model: (b, x) => b[0]! / (1 + Math.exp(b[1]! - b[2]! * x)) ** (1 / b[3]!),
        jacobian: (b, x) => {
          const e = Math.exp(b[1]! - b[2]! * x);
          const u = 1 + e;
          const f = b[0]! * u ** (-1 / b[3]!);
          const inner = (-1 / b[3]!) * b[0]! * u ** (-1 / b[3]! - 1) * e;
          return [u ** (-1 / b[3]!), inner, -x * inner, (f * Math.log(u)) / b[3]! ** 2];
        },
      };
    case 'Bennett5':
      return {
        model: (b, x) => b[0]! * (b[1]! + x) ** (-1 / b[2]!),
        jacobian: (b, x) => {
          const v = (b[1]! + x) ** (-1 / b[2]!);
          return [v, ((-b[0]! / b[2]!) * v) / (b[1]! + x), (b[0]! * v * Math.log(b[1]! + x)) / b[2]! ** 2];
        },
      };
    default:
      throw new Error(`No model written for NIST dataset ${dataset.name}.`);
  }
}

/**
 * The NIST problem `dataset` from starting point 1 or 2, with the analytic Jacobian or (when
 * `analyticJacobian` is false) none, so that the fit uses central differences. Nelson's response
 * is log(y), as its model line states.
 */
export function nistNonlinearProblem(
  dataset: NistDataset,
  start: 1 | 2,
  analyticJacobian = true,
): NonlinearProblem {
  const { model, jacobian } = nistModel(dataset);
  const initial = dataset.parameters.map((parameter) => {
    const value = start === 1 ? parameter.start1 : parameter.start2;
    if (value === undefined) {
      throw new Error(`${dataset.name} has no starting value ${start} for ${parameter.name}.`);
    }
    return value;
  });
  return {
    model,
    ...(analyticJacobian ? { jacobian } : {}),
    x: dataset.predictors[0]!,
    y: dataset.name === 'Nelson' ? dataset.y.map((value) => Math.log(value)) : dataset.y,
    initial,
  };
}

/** Lower and average difficulty problems (must converge and match), then the higher ones. */
export const NIST_NONLINEAR_LOWER_AVERAGE = [
  'Misra1a',
  'Chwirut2',
  'Chwirut1',
  'Lanczos3',
  'Gauss1',
  'Gauss2',
  'DanWood',
  'Misra1b',
  'Kirby2',
  'Hahn1',
  'Nelson',
  'MGH17',
  'Lanczos1',
  'Lanczos2',
  'Gauss3',
  'Misra1c',
  'Misra1d',
  'Roszman1',
  'ENSO',
] as const;
export const NIST_NONLINEAR_HIGHER = [
  'MGH09',
  'Thurber',
  'BoxBOD',
  'Rat42',
  'MGH10',
  'Eckerle4',
  'Rat43',
  'Bennett5',
] as const;
