'use client';

import { createContext, useContext, useMemo, useState, type ReactNode } from 'react';

/**
 * The flag (finding) selected on the analysis page, shared by the canvas viewer and the findings table so a
 * click in one moves the other. `source` tells the other side whether it should react (the table scrolls to a
 * row selected on the canvas; the canvas centres on a row selected in the table).
 */
export type FindingSelection = {
  /** The pipeline's stable flag id (Flag.id, stored as analysis_flags.flag_key). */
  flagId: string;
  /** Point to centre on, µm (Flag.xUm / Flag.yUm). */
  xUm: number;
  yUm: number;
  /** Region of the flag, µm [x0, y0, x1, y1]. */
  bboxUm: [number, number, number, number];
  source: 'table' | 'canvas';
};

type SelectionContextValue = {
  selected: FindingSelection | null;
  select: (selection: FindingSelection | null) => void;
};

const SelectionContext = createContext<SelectionContextValue | null>(null);

export function FindingSelectionProvider({ children }: { children: ReactNode }) {
  const [selected, select] = useState<FindingSelection | null>(null);
  const value = useMemo(() => ({ selected, select }), [selected]);
  return <SelectionContext.Provider value={value}>{children}</SelectionContext.Provider>;
}

/** Selection shared on the analysis page; outside a provider it is inert (nothing selected, select is a no-op). */
export function useFindingSelection(): SelectionContextValue {
  return useContext(SelectionContext) ?? { selected: null, select: () => {} };
}
