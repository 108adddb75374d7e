/**
 * Background analysis for large tables, so that typing never waits for it. Receives a table
 * (typed arrays survive structured cloning) with a sequence number and answers with the analysis.
 */
import { analyzeTable } from '../engine/analyze';
import type { FlowTable } from '../engine/model';

/** Message into the worker. */
export interface AnalysisRequest {
  seq: number;
  table: FlowTable;
}

/** Message out of the worker. */
export type AnalysisResponse = { seq: number; ok: true; analysis: ReturnType<typeof analyzeTable>; ms: number } | { seq: number; ok: false; message: string };

const scope = self as unknown as { onmessage: ((e: MessageEvent<AnalysisRequest>) => void) | null; postMessage: (m: AnalysisResponse) => void };

scope.onmessage = (e) => {
  const { seq, table } = e.data;
  const t0 = performance.now();
  try {
    const analysis = analyzeTable(table);
    scope.postMessage({ seq, ok: true, analysis, ms: performance.now() - t0 });
  } catch (err) {
    scope.postMessage({ seq, ok: false, message: err instanceof Error ? err.message : String(err) });
  }
};
