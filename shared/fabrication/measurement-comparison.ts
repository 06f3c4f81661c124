/**
 * Prediction against measurement for one figure (E or Γ): the difference in percent of the
 * prediction, and in units of the measurement's standard uncertainty (the fit's σ), when
 * one is known. Plain arithmetic, common practice, no source.
 */
interface FigureComparison {
  predicted: number;
  measured: number;
  /** measured − predicted, same unit. */
  difference: number;
  /** 100·(measured − predicted)/|predicted|; null when the prediction is 0. */
  percent: number | null;
  /** The measurement's σ (same unit), null when typed in without one. */
  uncertainty: number | null;
  /** (measured − predicted)/σ; null without σ or with σ = 0. */
  sigmas: number | null;
}

export function compareFigure(predicted: number, measured: number, uncertainty: number | null): FigureComparison {
  const difference = measured - predicted;
  return {
    predicted,
    measured,
    difference,
    percent: predicted === 0 ? null : (100 * difference) / Math.abs(predicted),
    uncertainty,
    sigmas: uncertainty !== null && uncertainty > 0 ? difference / uncertainty : null,
  };
}
