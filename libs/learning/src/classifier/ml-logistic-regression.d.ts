// Types for the parts of ml-logistic-regression 2.x the solver's reference test uses
// (the package ships none). Read from its source, src/logreg.js.
declare module 'ml-logistic-regression' {
  import type { AbstractMatrix, Matrix } from 'ml-matrix';

  interface TwoClassModel {
    numSteps: number;
    learningRate: number;
    weights: Matrix | null;
  }

  export default class LogisticRegression {
    constructor(options?: { numSteps?: number; learningRate?: number });
    numSteps: number;
    learningRate: number;
    numberClasses: number;
    classifiers: TwoClassModel[];
    /** One-vs-rest: for class i the target is 0 for label i and 1 otherwise. */
    train(X: AbstractMatrix, Y: AbstractMatrix): void;
    predict(X: AbstractMatrix): number[];
  }
}
