/**
 * Live analysis for the workbench: small tables are analyzed synchronously during render
 * (instant, no flicker), large ones in a Web Worker, newest request wins.
 */
import { useEffect, useMemo, useRef, useState } from 'react';
import { analyzeTable, type Analysis } from '../engine/analyze';
import { countColumns, type FlowTable } from '../engine/model';
import type { AnalysisRequest, AnalysisResponse } from './analysis.worker';

/** Tables with more cells than this are analyzed in the worker. */
export const WORKER_ABOVE_CELLS = 1024;

/** Result of the hook: the latest analysis (possibly of an older version while `pending`). */
export interface LiveAnalysis {
  analysis: Analysis | null;
  pending: boolean;
  error: string | null;
  /** Milliseconds the last analysis took. */
  ms: number | null;
}

/** Analyzes `table` whenever `version` changes. */
export function useLiveAnalysis(table: FlowTable, version: number): LiveAnalysis {
  const big = table.states.length * countColumns(table.inputs.length) > WORKER_ABOVE_CELLS;
  const sync = useMemo(() => {
    if (big) return null;
    const t0 = performance.now();
    try {
      return { analysis: analyzeTable(table), error: null, ms: performance.now() - t0 };
    } catch (e) {
      return { analysis: null, error: e instanceof Error ? e.message : String(e), ms: null };
    }
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [big, version, table]);

  const workerRef = useRef<Worker | null>(null);
  const seqRef = useRef(0);
  const [async, setAsync] = useState<LiveAnalysis>({ analysis: null, pending: false, error: null, ms: null });

  useEffect(() => {
    if (!big) return;
    if (typeof Worker === 'undefined') {
      const t0 = performance.now();
      setAsync({ analysis: analyzeTable(table), pending: false, error: null, ms: performance.now() - t0 });
      return;
    }
    if (!workerRef.current) {
      const w = new Worker(new URL('./analysis.worker.ts', import.meta.url), { type: 'module' });
      w.onmessage = (e: MessageEvent<AnalysisResponse>) => {
        const r = e.data;
        if (r.seq !== seqRef.current) return;
        if (r.ok) setAsync({ analysis: r.analysis, pending: false, error: null, ms: r.ms });
        else setAsync((a) => ({ ...a, pending: false, error: r.message }));
      };
      workerRef.current = w;
    }
    const seq = ++seqRef.current;
    setAsync((a) => ({ ...a, pending: true }));
    const msg: AnalysisRequest = { seq, table };
    workerRef.current.postMessage(msg);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [big, version, table]);

  useEffect(() => () => workerRef.current?.terminate(), []);

  return big ? async : { analysis: sync?.analysis ?? null, pending: false, error: sync?.error ?? null, ms: sync?.ms ?? null };
}
