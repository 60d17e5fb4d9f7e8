import {
  analyseDatasetWithBands,
  type DatasetAnalysis,
  type DatasetOptions,
} from '../kinetics/analyse-dataset.ts';
import { analyseSeries, type FirstFitBand } from '../kinetics/analyse-series.ts';
import type { StudyAttribute } from '../kinetics/stability/study-attributes.ts';
import type { MassBalance, StudyShelfLife } from '../kinetics/stability/study-shelf-life-types.ts';
import type { IntegerOrder, Series } from '../kinetics/types.ts';

/**
 * What an analysis run stores as its result: the engine's `DatasetAnalysis`, unchanged, and the
 * confidence band of each series' chosen rate law on a grid of times, which the analysis screen,
 * the export and the report draw. Both come from the engine; nothing here is estimated anew.
 */
export interface StoredAnalysisResult {
  /** The study's first attribute (the only one in a study of one attribute). */
  analysis: DatasetAnalysis;
  confidenceBands: ConfidenceBand[];
  /**
   * A study of several attributes: each attribute after the first, in the study's order, analysed
   * alone with its own criterion and direction (ICH Q1E Appendix A). Absent for one attribute.
   */
  otherAttributes?: AttributeAnalysisResult[];
  /** A study of several attributes: the earliest shelf life across them and the limiting attribute. */
  studyShelfLife?: StudyShelfLife;
  /** Present when the study marks an assay and at least one degradation product; else absent. */
  massBalance?: MassBalance;
}

/** One attribute's analysis within a multi-attribute run. */
export interface AttributeAnalysisResult {
  attribute: StudyAttribute;
  analysis: DatasetAnalysis;
  confidenceBands: ConfidenceBand[];
}

/** Mean-curve confidence band of one series' chosen law, over the observed time span. */
export interface ConfidenceBand {
  seriesId: string;
  /**
   * The reported order, else the best integer order by AICc. Figures shade only the band of the
   * order the results table names (`chosenBecause` 'reported-order'); the other is kept in the record.
   */
  order: IntegerOrder;
  chosenBecause: 'reported-order' | 'lowest-aicc';
  confidenceLevel: number;
  points: { time: number; estimate: number | null; lower: number | null; upper: number | null }[];
}

/** Points per band: enough for a smooth curve on a 600-pixel plot, few enough to store. */
export const BAND_POINTS = 41;

/**
 * The engine's analysis of a dataset and the confidence band of each series' chosen law, both from
 * the one fit (issue 16): the band is the chosen law's predictions on an even grid across the
 * observed span, computed from the fit the analysis itself made — the same numbers
 * `confidenceBands` gets by analysing every series a second time, in half the time.
 *
 * Throws `KineticsError` as `analyseDataset` does (invalid options); a series that was not
 * analysed, or whose chosen law has no interval, gets no band or null bounds.
 */
export function analyseForStorage(
  seriesList: readonly Series[],
  options: DatasetOptions,
): StoredAnalysisResult {
  const { analysis, bands } = analyseDatasetWithBands(seriesList, options, BAND_POINTS);
  return { analysis, confidenceBands: bandsOfFirstFit(analysis, bands) };
}

function bandsOfFirstFit(
  analysis: DatasetAnalysis,
  bands: readonly (FirstFitBand | null)[],
): ConfidenceBand[] {
  const found: ConfidenceBand[] = [];
  analysis.series.forEach((result, index) => {
    const fitted = result.analysis;
    const band = bands[index];
    if (!fitted || !band) return;
    found.push({
      seriesId: result.id,
      order: band.order,
      chosenBecause: fitted.reportedOrder === null ? 'lowest-aicc' : 'reported-order',
      confidenceLevel: fitted.confidenceLevel,
      points: band.predictions.map(bandPoint),
    });
  });
  return found;
}

const bandPoint = (prediction: {
  time: number;
  estimate: number | null;
  confidenceInterval: [number, number] | null;
}): ConfidenceBand['points'][number] => ({
  time: prediction.time,
  estimate: prediction.estimate,
  lower: prediction.confidenceInterval?.[0] ?? null,
  upper: prediction.confidenceInterval?.[1] ?? null,
});

/**
 * The confidence band of each analysed series: the series is analysed again with its chosen order
 * fixed and `predictAt` on an even grid across its observed span — the same data, options and
 * deterministic fit, so the curve is the one of the stored result; only the predictions are new.
 *
 * Throws nothing: a series that was not analysed, or whose chosen law has no interval, gets no
 * band or null bounds.
 *
 * Kept as the reference that `analyseForStorage` is tested against (stored-result.test.ts).
 *
 * Example: a first-order series observed from 0 to 24 months gets 41 points at 0, 0.6, …, 24
 * months, each with the fitted value and its 95 % confidence interval.
 */
export function confidenceBands(
  analysis: DatasetAnalysis,
  seriesList: readonly Series[],
  options: DatasetOptions,
): ConfidenceBand[] {
  const bands: ConfidenceBand[] = [];
  const {
    storageTemperatureC: _storage,
    direction: _direction,
    arrheniusWeighting: _weighting,
    lowerLimit: _lower,
    upperLimit: _upper,
    ...seriesOptions
  } = options;
  analysis.series.forEach((result, index) => {
    const series = seriesList[index];
    const fitted = result.analysis;
    if (!series || !fitted) return;
    const order = fitted.reportedOrder ?? fitted.selection.bestIntegerOrder;
    if (order === null || order === undefined) return;
    const [start, end] = fitted.timeSpan;
    const grid = Array.from(
      { length: BAND_POINTS },
      (_, i) => start + ((end - start) * i) / (BAND_POINTS - 1),
    );
    try {
      const again = analyseSeries(series, {
        ...seriesOptions,
        order,
        predictAt: grid,
      });
      bands.push({
        seriesId: result.id,
        order,
        chosenBecause: fitted.reportedOrder === null ? 'lowest-aicc' : 'reported-order',
        confidenceLevel: fitted.confidenceLevel,
        points: (again.predictions ?? []).map(bandPoint),
      });
    } catch {
      // The first pass analysed this series, so a second pass cannot fail on the data; if it
      // does anyway, the screen draws the curve without a band rather than losing the run.
    }
  });
  return bands;
}
