// The Footpoint ledger: one row per footpoint of the frame on the map, sortable by any column
// (header buttons, so the keyboard works), a row click or Enter highlights the footpoint on the map.

import { el } from './dom.js';
import { sortFootpoints, topPartners, type LedgerKey, type SortDirection } from './ledgerSort.js';
import { rotationCell, spinCell } from './ledgerCells.js';
import { formatFlux, formatRate } from './unitFormat.js';
import type { WireFootpoint } from './wire.js';

const COLUMNS: { key: LedgerKey; label: string; title: string }[] = [
  { key: 'id', label: 'id', title: 'footpoint id (stable across frames)' },
  { key: 'polarity', label: 'polarity', title: 'sign of bn' },
  { key: 'flux', label: 'flux', title: 'magnetic flux, Mx (sorted by |flux|)' },
  { key: 'omega', label: 'rotation', title: 'rotation rate, degrees per hour, + counter-clockwise seen from the corona' },
  { key: 'spin', label: 'spin', title: 'spin contribution to the rate, Mx²/s' },
  { key: 'partner', label: 'largest orbit partners', title: 'footpoints with the largest orbit (braiding) terms with this one, Mx²/s' },
];

export class Ledger {
  private rows: WireFootpoint[] = [];
  private key: LedgerKey = 'flux';
  private direction: SortDirection = 'descending';
  private selected: string | null = null;
  onSelect: ((id: string | null) => void) | undefined;

  constructor(private readonly table: HTMLTableElement, private readonly caption: HTMLElement) {
    this.renderHead();
  }

  setRows(rows: WireFootpoint[], frameLabel: string): void {
    this.rows = rows;
    this.caption.textContent = frameLabel;
    this.renderBody();
  }

  select(id: string | null): void {
    this.selected = id;
    for (const tr of Array.from(this.table.tBodies[0]?.rows ?? [])) {
      const on = tr.dataset.id === id;
      tr.classList.toggle('selected', on);
      tr.setAttribute('aria-selected', on ? 'true' : 'false');
    }
  }

  private renderHead(): void {
    const thead = this.table.tHead ?? this.table.createTHead();
    thead.replaceChildren();
    const tr = el('tr');
    for (const c of COLUMNS) {
      const active = c.key === this.key;
      const button = el('button', { type: 'button', class: 'sort', title: c.title, text: c.label + (active ? (this.direction === 'ascending' ? ' ▲' : ' ▼') : '') });
      button.addEventListener('click', () => {
        if (this.key === c.key) this.direction = this.direction === 'ascending' ? 'descending' : 'ascending';
        else {
          this.key = c.key;
          this.direction = c.key === 'id' || c.key === 'polarity' ? 'ascending' : 'descending';
        }
        this.renderHead();
        this.renderBody();
        (this.table.querySelector(`th[data-key="${c.key}"] button`) as HTMLButtonElement | null)?.focus();
      });
      tr.append(el('th', { scope: 'col', 'data-key': c.key, 'aria-sort': active ? this.direction : 'none' }, button));
    }
    thead.append(tr);
  }

  private renderBody(): void {
    const tbody = this.table.tBodies[0] ?? this.table.createTBody();
    tbody.replaceChildren();
    if (this.rows.length === 0) {
      tbody.append(el('tr', {}, el('td', { colspan: COLUMNS.length, class: 'empty', text: 'no footpoints in this frame' })));
      return;
    }
    for (const fp of sortFootpoints(this.rows, this.key, this.direction)) {
      const id = String(fp.id);
      const rotation = rotationCell(fp);
      const spin = spinCell(fp);
      const partners = topPartners(fp, 3).map((p) => `${p.id}: ${formatRate(p.orbit)}`).join('; ');
      const tr = el(
        'tr',
        { tabindex: 0, 'data-id': id, 'aria-selected': id === this.selected ? 'true' : 'false', class: id === this.selected ? 'selected' : undefined },
        el('td', { text: id }),
        el('td', { text: fp.polarity > 0 ? '+ positive' : '− negative' }),
        el('td', { class: 'num', text: formatFlux(fp.flux) }),
        el('td', { class: 'num rotation', text: rotation.text, title: rotation.title || undefined }),
        el('td', { class: 'num spin', text: spin.text, title: spin.title || undefined }),
        el('td', { class: 'partners', text: partners || '—' }),
      );
      const choose = (): void => {
        const next = this.selected === id ? null : id;
        this.select(next);
        this.onSelect?.(next);
      };
      tr.addEventListener('click', choose);
      tr.addEventListener('keydown', (ev) => {
        if (ev.key === 'Enter' || ev.key === ' ') {
          ev.preventDefault();
          choose();
        } else if (ev.key === 'ArrowDown' || ev.key === 'ArrowUp') {
          ev.preventDefault();
          const sib = (ev.key === 'ArrowDown' ? tr.nextElementSibling : tr.previousElementSibling) as HTMLElement | null;
          sib?.focus();
        }
      });
      tbody.append(tr);
    }
  }
}
