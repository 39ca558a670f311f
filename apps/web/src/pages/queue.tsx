import { useEffect, useRef, useState } from 'preact/hooks';
import {
  ApiError,
  api,
  clientId,
  get,
  post,
  put,
  type Desk,
  type LeaseGrant,
  type MyLeases,
  type OneVerdict,
  type Preferences,
  type Progress,
  type UndoneVerdict,
  type Verdict,
  type VerdictCount,
} from '../api';
import { useInterval, type PageProps } from '../app';
import { CallStatement, Probabilities, RuledOut } from '../components/call';
import { HighlightedText } from '../components/highlighted-text';
import { countHidden } from '../hidden-characters';
import { clock, when } from '../format';

/** The server keeps undo open this long by default (UNDO_WINDOW_SECONDS); it has the last word. */
const UNDO_WINDOW_MS = 300_000;
const CONFIRM_KEY = 'cribra.confirm-with-enter';

type Choice = { category: string } | { abstain: true };
interface Pending {
  choice: Choice;
  clientId: string;
  grant: LeaseGrant;
  elapsedMs: number;
  note: string;
  /** The reason of an urgent verdict; null when it is not urgent. */
  urgentReason: string | null;
}
interface Last {
  verdict: Verdict;
  label: string;
  at: number;
}

const label = (c: Choice) => ('abstain' in c ? 'abstain' : c.category);

/** Where typing goes: keys pressed there are text, not commands. Check boxes and buttons are not. */
function typingIn(el: EventTarget | null): el is HTMLElement {
  if (!(el instanceof HTMLElement)) return false;
  if (el.isContentEditable || el.tagName === 'TEXTAREA' || el.tagName === 'SELECT') return true;
  if (el.tagName !== 'INPUT') return false;
  return !['checkbox', 'radio', 'button', 'submit', 'reset', 'range', 'file'].includes((el as HTMLInputElement).type);
}

/** The start of today on the reviewer's own clock. */
function localMidnight(): Date {
  const d = new Date();
  d.setHours(0, 0, 0, 0);
  return d;
}

/**
 * The reviewer's queue: one item at a time, decided by one key. The next
 * item is requested together with the verdict, so it appears as soon as
 * both answers are back.
 */
export function QueuePage({ params }: PageProps) {
  const deskId = params.deskId;
  const [desk, setDesk] = useState<Desk | null>(null);
  const [grant, setGrant] = useState<LeaseGrant | null>(null);
  const [empty, setEmpty] = useState<string | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const [note, setNote] = useState('');
  const [selected, setSelected] = useState<Choice | null>(null);
  const [confirm, setConfirm] = useState(() => localStorage.getItem(CONFIRM_KEY) === 'on');
  const [last, setLast] = useState<Last | null>(null);
  const [busy, setBusy] = useState(false);
  // Set at once (state updates land only with the next render): a second key press can never send twice.
  const sending = useRef(false);
  const [failed, setFailed] = useState<Pending | null>(null);
  const [now, setNow] = useState(Date.now());
  const shownAt = useRef(performance.now());
  const noteRef = useRef<HTMLTextAreaElement>(null);
  // Urgent: `e` opens the short reason field; the verdict key then sends the verdict as urgent.
  const [urgent, setUrgent] = useState(false);
  const [urgentReason, setUrgentReason] = useState('');
  const urgentRef = useRef<HTMLInputElement>(null);
  const [help, setHelp] = useState(false);
  const [today, setToday] = useState<number | null>(null);
  // Wellbeing: the account's own preferences (kept by the server, so they follow the reviewer to any browser).
  const [prefs, setPrefs] = useState<Preferences | null>(null);
  const [revealed, setRevealed] = useState(false);
  const [workingSince, setWorkingSince] = useState(() => Date.now());

  useInterval(() => setNow(Date.now()), 1000);
  useInterval(
    () => {
      if (empty !== null && !busy) void next();
    },
    empty !== null ? 15_000 : null,
  );

  const show = (g: LeaseGrant | null, why?: Progress) => {
    setGrant(g);
    setSelected(null);
    setNote('');
    setUrgent(false);
    setUrgentReason('');
    setRevealed(false);
    shownAt.current = performance.now();
    setEmpty(g ? null : emptyReason(why ?? null));
  };

  async function next(): Promise<void> {
    try {
      const g = await post<LeaseGrant | null>(`/desks/${deskId}/leases`);
      show(g, g ? undefined : await get<Progress>(`/desks/${deskId}/progress`).catch(() => undefined));
      setError(null);
    } catch (e) {
      setError((e as Error).message);
    }
  }

  useEffect(() => {
    void (async () => {
      try {
        setDesk(await get<Desk>(`/desks/${deskId}`));
        void get<Preferences>('/me/preferences').then(setPrefs, () => setPrefs(null));
        void get<VerdictCount>(
          `/desks/${deskId}/verdicts/mine/count?since=${encodeURIComponent(localMidnight().toISOString())}`,
        ).then(
          (c) => setToday(c.count),
          () => setToday(null),
        );
        // Items this reviewer held before a reload go back to the queue at once rather than waiting for their leases to run out.
        const { leases } = await get<MyLeases>(`/desks/${deskId}/leases/mine`);
        await Promise.all(leases.map((l) => api('DELETE', `/leases/${l.id}`).catch(() => undefined)));
        await next();
      } catch (e) {
        setError((e as Error).message);
      }
    })();
  }, [deskId]);

  /** Sends a verdict (retried with the same client id, so a retry never counts twice) and fetches the next item at the same time. */
  async function send(p: Pending): Promise<void> {
    if (sending.current) return;
    sending.current = true;
    setBusy(true);
    setFailed(null);
    const body = {
      leaseId: p.grant.lease.id,
      itemId: p.grant.item.id,
      clientId: p.clientId,
      elapsedMs: p.elapsedMs,
      ...(p.note.trim() ? { note: p.note.trim() } : {}),
      ...(p.urgentReason !== null ? { urgent: true, urgentReason: p.urgentReason } : {}),
      ...p.choice,
    };
    const submit = async (): Promise<Verdict> => {
      for (let attempt = 0; ; attempt++) {
        try {
          return (await post<OneVerdict>(`/desks/${deskId}/verdicts`, body)).verdict;
        } catch (e) {
          if (!(e instanceof ApiError) || e.status !== 0 || attempt >= 3) throw e;
          await new Promise((r) => setTimeout(r, 400 * 2 ** attempt));
        }
      }
    };
    const [verdict, nextGrant] = await Promise.allSettled([
      submit(),
      post<LeaseGrant | null>(`/desks/${deskId}/leases`),
    ]);
    if (verdict.status === 'fulfilled') {
      setLast({ verdict: verdict.value, label: label(p.choice), at: Date.now() });
      setNotice(
        p.urgentReason !== null
          ? `Item ${p.grant.item.id} is marked urgent: it waits at the top of the supervisors' overview until one of them acknowledges it.`
          : null,
      );
      setToday((n) => (n === null ? n : n + 1));
    } else {
      setFailed(p);
      setError(
        `Your verdict “${label(p.choice)}” on item ${p.grant.item.id} was not recorded: ${(verdict.reason as Error).message}`,
      );
    }
    if (nextGrant.status === 'fulfilled') {
      show(
        nextGrant.value,
        nextGrant.value ? undefined : await get<Progress>(`/desks/${deskId}/progress`).catch(() => undefined),
      );
      if (verdict.status === 'fulfilled') setError(null);
    } else if (verdict.status === 'fulfilled') {
      setError((nextGrant.reason as Error).message);
    }
    sending.current = false;
    setBusy(false);
  }

  function decide(choice: Choice): void {
    if (!grant || sending.current) return;
    if (urgent && urgentReason.trim() === '') {
      setError('An urgent verdict needs a short reason: type it in the urgent field, then press the verdict key.');
      urgentRef.current?.focus();
      return;
    }
    if (confirm && (selected === null || label(selected) !== label(choice))) {
      setSelected(choice);
      return;
    }
    void send({
      choice,
      clientId: clientId(),
      grant,
      elapsedMs: Math.round(performance.now() - shownAt.current),
      note,
      urgentReason: urgent ? urgentReason.trim() : null,
    });
  }

  /** `e`: opens the urgent field (or, when it is open and empty, closes it). */
  function toggleUrgent(): void {
    if (!grant) return;
    if (urgent && urgentReason.trim() === '') {
      setUrgent(false);
      return;
    }
    setUrgent(true);
    // The field exists after this render.
    setTimeout(() => urgentRef.current?.focus(), 0);
  }

  /**
   * Takes back the last verdict and puts that same item in front of the
   * reviewer again (the server leases it to them in the same step), so it can
   * be corrected; the item that was showing goes back to the queue.
   */
  async function undo(): Promise<void> {
    if (!last || sending.current) return;
    sending.current = true;
    try {
      const answer = await post<UndoneVerdict>(`/verdicts/${last.verdict.id}/undo?reopen=true`);
      setToday((n) => (n === null ? n : Math.max(0, n - 1)));
      setLast(null);
      if (answer.lease) {
        if (grant) void api('DELETE', `/leases/${grant.lease.id}`).catch(() => undefined);
        show(answer.lease);
        setNotice(
          `Your verdict “${last.label}” on item ${last.verdict.itemId} is undone: the item is back for you to decide again.`,
        );
      } else {
        setNotice(
          `Your verdict “${last.label}” on item ${last.verdict.itemId} is undone; the item is back in the queue.`,
        );
        if (!grant) await next();
      }
      setError(null);
    } catch (e) {
      setError(`Undo failed: ${(e as Error).message}`);
    } finally {
      sending.current = false;
    }
  }

  /**
   * Hands the item back (`h`) or skips it (`s`: handed back, and not served to this reviewer again for the session).
   * The next one is leased first, so the queue cannot serve the same item straight back.
   */
  async function handBack(skip = false): Promise<void> {
    if (!grant || sending.current) return;
    sending.current = true;
    setBusy(true);
    const old = grant;
    try {
      const g = await post<LeaseGrant | null>(`/desks/${deskId}/leases`);
      await api('DELETE', `/leases/${old.lease.id}${skip ? '?skip=true' : ''}`);
      show(g, g ? undefined : await get<Progress>(`/desks/${deskId}/progress`).catch(() => undefined));
      setNotice(
        skip
          ? `Item ${old.item.id} is skipped: it goes to another reviewer and will not be shown to you again in this session.`
          : `Item ${old.item.id} is handed back to the queue for another reviewer.`,
      );
      setError(null);
    } catch (e) {
      setError(`${skip ? 'Skipping' : 'Handing back'} failed: ${(e as Error).message}`);
    } finally {
      sending.current = false;
      setBusy(false);
    }
  }

  /** Saves the wellbeing preferences for this account; the screen follows at once. */
  async function savePrefs(next: Preferences): Promise<void> {
    const before = prefs;
    setPrefs(next);
    try {
      setPrefs(await put<Preferences>('/me/preferences', next));
    } catch (e) {
      setPrefs(before);
      setError(`Your preference was not saved: ${(e as Error).message}`);
    }
  }

  const categories = desk?.categories.map((c) => c.name) ?? [];
  const keyed = [
    ...categories.slice(0, 9).map((c, i) => ({ key: String(i + 1), choice: { category: c }, text: c })),
    { key: '0', choice: { abstain: true } as Choice, text: 'abstain' },
  ];

  // The key handler is replaced on every render and read when a key arrives, so a key pressed the moment the next
  // item is drawn acts on that item (an effect would install the new handler only after the browser has painted).
  const onKey = useRef<(e: KeyboardEvent) => void>(() => undefined);
  onKey.current = (e: KeyboardEvent) => {
    const target = e.target;
    // Typing in the note is text; Esc leaves the note and the keys work again. Anywhere else they always work.
    if (typingIn(target)) {
      if (e.key === 'Escape') target.blur();
      return;
    }
    if (e.ctrlKey || e.metaKey || e.altKey) return;
    if (help) {
      if (e.key === 'Escape' || e.key === '?') {
        e.preventDefault();
        setHelp(false);
      }
      return;
    }
    const k = keyed.find((x) => x.key === e.key);
    if (k) {
      e.preventDefault();
      decide(k.choice);
      return;
    }
    const onButton = target instanceof HTMLElement && target.tagName === 'BUTTON';
    if (e.key === 'Enter' && confirm && selected && !onButton) {
      e.preventDefault();
      decide(selected);
      return;
    }
    if (e.key === 'Escape' && selected) {
      setSelected(null);
      return;
    }
    const command: Partial<Record<string, () => void>> = {
      u: () => void undo(),
      n: () => noteRef.current?.focus(),
      e: () => toggleUrgent(),
      h: () => void handBack(),
      s: () => void handBack(true),
      r: () => setRevealed((r) => !r),
      '?': () => setHelp(true),
    };
    const run = command[e.key];
    if (run) {
      e.preventDefault();
      run();
    }
  };
  useEffect(() => {
    const listener = (e: KeyboardEvent) => onKey.current(e);
    window.addEventListener('keydown', listener);
    return () => window.removeEventListener('keydown', listener);
  }, []);

  const leaseLeft = grant ? new Date(grant.lease.expiresAt).getTime() - now : 0;
  const onItem = grant ? performance.now() - shownAt.current : 0;
  const undoLeft = last ? UNDO_WINDOW_MS - (now - last.at) : 0;
  const blurred = prefs?.blurText === true && !revealed;
  const breakMinutes = prefs?.breakReminderMinutes ?? null;
  const workedMinutes = Math.floor((now - workingSince) / 60_000);
  const breakDue = breakMinutes !== null && workedMinutes >= breakMinutes;

  return (
    <section class="queue" aria-busy={busy}>
      <div class="queue-main">
        {error && (
          <p class="error" role="alert">
            {error}{' '}
            {failed && (
              <button type="button" onClick={() => void send(failed)}>
                Send it again
              </button>
            )}
          </p>
        )}
        {notice && (
          <p class="notice" role="status">
            {notice}
          </p>
        )}
        {breakDue && (
          <div class="break-reminder" role="status">
            <p>
              <strong>Time for a break.</strong> You have been on the queue for {workedMinutes} minutes. Step away from
              the screen for a few minutes, then carry on.
            </p>
            <button type="button" onClick={() => setWorkingSince(Date.now())}>
              I am back from a break
            </button>
          </div>
        )}
        {grant && leaseLeft <= 0 && (
          <p class="warning" role="alert">
            Your hold on this item ended at {new Date(grant.lease.expiresAt).toLocaleTimeString('en-GB')}. Another
            reviewer may have it now. A verdict is still accepted if nobody else has taken the item.{' '}
            <button type="button" onClick={() => void next()}>
              Take the next item instead
            </button>
          </p>
        )}
        {grant && (
          <article class="item" data-item-id={grant.item.id} aria-label={`Item ${grant.item.id}`}>
            <header class="item-meta">
              <span>Item {grant.item.id}</span>
              {grant.item.externalId && <span>ref {grant.item.externalId}</span>}
              {grant.item.source && <span>{grant.item.source}</span>}
              {grant.item.postedAt && <span>posted {when(grant.item.postedAt)}</span>}
            </header>
            <div class={blurred ? 'item-shield blurred' : 'item-shield'} aria-hidden={blurred ? 'true' : undefined}>
              <HighlightedText text={grant.item.text} highlights={grant.highlights} categories={categories} />
            </div>
            {prefs?.blurText && (
              <p class="reveal-hint">
                <button type="button" class="quiet" onClick={() => setRevealed((r) => !r)}>
                  <kbd>r</kbd> {blurred ? 'Reveal the text' : 'Blur the text again'}
                </button>{' '}
                {blurred && <span class="muted">The text is blurred until you reveal it (your choice below).</span>}
              </p>
            )}
            {countHidden(grant.item.text) > 0 && (
              <p class="hidden-legend warning">
                This text holds {countHidden(grant.item.text)} hidden character(s): controls that change the direction
                of the text, or invisible ones. Each is shown as a boxed marker where it stands (point at it for its
                name); the text around it is shown in the order it was written.
              </p>
            )}
            {grant.highlights.length > 0 && (
              <p class="seed-legend muted">
                Marked: seed terms, numbered by the category they belong to (
                {categories.map((c, i) => `${i + 1} ${c}`).join(', ')}).
              </p>
            )}
          </article>
        )}
        {grant && (
          <p class="keys muted" aria-label="Keys">
            Keys:{' '}
            {keyed.map((k) => (
              <span>
                <kbd>{k.key}</kbd> {k.text}{' '}
              </span>
            ))}
            · <kbd>u</kbd> undo the last verdict · <kbd>n</kbd> note · <kbd>e</kbd> urgent · <kbd>h</kbd> hand back ·{' '}
            <kbd>s</kbd> skip · <kbd>r</kbd> reveal
            {confirm ? (
              <>
                {' '}
                · <kbd>Enter</kbd> confirm
              </>
            ) : null}{' '}
            · <kbd>?</kbd> every key
          </p>
        )}
        {help && (
          <KeyHelp keyed={keyed} confirm={confirm} blur={prefs?.blurText === true} onClose={() => setHelp(false)} />
        )}
        {!grant && empty && (
          <div class="empty-queue" role="status">
            <h1>Nothing to decide right now</h1>
            <p>{empty}</p>
            <button type="button" onClick={() => void next()}>
              Look again
            </button>
          </div>
        )}
        {!grant && !empty && !error && (
          <p class="loading" role="status">
            Fetching the next item…
          </p>
        )}
      </div>
      <aside class="queue-side" aria-label="Decision">
        {grant && <CallStatement prediction={grant.prediction} target={desk?.coverageTarget ?? 0.9} />}
        {grant?.prediction && desk && <RuledOut prediction={grant.prediction} settings={desk} />}
        {grant?.prediction && <Probabilities prediction={grant.prediction} order={desk ? categories : undefined} />}
        {grant && (
          <div class="decide">
            <h2 class="sr-only">Your verdict</h2>
            <div class="decide-buttons" role="group" aria-label="Verdict: press the number key">
              {keyed.map((k) => (
                <button
                  type="button"
                  class={`decide-button ${'abstain' in k.choice ? 'abstain' : ''} ${selected && label(selected) === k.text ? 'selected' : ''}`}
                  aria-pressed={selected && label(selected) === k.text ? 'true' : undefined}
                  aria-keyshortcuts={k.key}
                  disabled={busy}
                  onClick={() => decide(k.choice)}
                >
                  <kbd>{k.key}</kbd> {k.text}
                </button>
              ))}
            </div>
            {confirm && selected && (
              <p class="confirm-hint" role="status">
                Press <kbd>Enter</kbd> to confirm “{label(selected)}”, or another key to change.
              </p>
            )}
            {urgent && (
              <label class="urgent-field">
                <span>
                  <strong>Urgent</strong>: say why in a few words (<kbd>Enter</kbd> or <kbd>Esc</kbd> leaves the field),
                  then press the verdict key. The item goes to the top of the supervisors' overview.
                </span>
                <input
                  ref={urgentRef}
                  type="text"
                  maxLength={280}
                  required
                  value={urgentReason}
                  aria-label="Why it is urgent"
                  onInput={(e) => setUrgentReason(e.currentTarget.value)}
                  onKeyDown={(e) => {
                    if (e.key === 'Enter') {
                      e.preventDefault();
                      e.currentTarget.blur();
                    }
                  }}
                />
                <button
                  type="button"
                  class="quiet"
                  onClick={() => {
                    setUrgent(false);
                    setUrgentReason('');
                  }}
                >
                  Not urgent after all
                </button>
              </label>
            )}
            <label class="note">
              Note (optional, <kbd>n</kbd>; <kbd>Esc</kbd> leaves)
              <textarea
                ref={noteRef}
                rows={2}
                maxLength={2000}
                value={note}
                onInput={(e) => setNote(e.currentTarget.value)}
              />
            </label>
            <label class="check">
              <input
                type="checkbox"
                checked={confirm}
                onChange={(e) => {
                  setConfirm(e.currentTarget.checked);
                  localStorage.setItem(CONFIRM_KEY, e.currentTarget.checked ? 'on' : 'off');
                  setSelected(null);
                }}
              />{' '}
              Confirm each verdict with Enter
            </label>
          </div>
        )}
        {today !== null && (
          <p class="today">
            Today: <strong>{today}</strong> {today === 1 ? 'verdict' : 'verdicts'} on this desk
          </p>
        )}
        {prefs && <Wellbeing prefs={prefs} onChange={(p) => void savePrefs(p)} />}
        <dl class="timers">
          {grant && (
            <>
              <dt>On this item</dt>
              <dd>{clock(onItem)}</dd>
            </>
          )}
          {grant && (
            <>
              <dt>Hold ends in</dt>
              <dd class={leaseLeft < 60_000 ? 'soon' : ''}>{leaseLeft > 0 ? clock(leaseLeft) : 'ended'}</dd>
            </>
          )}
        </dl>
        {last && undoLeft > 0 && (
          <p class="undo">
            Last: “{last.label}” on item {last.verdict.itemId}.{' '}
            <button type="button" class="quiet" onClick={() => void undo()}>
              <kbd>u</kbd> Undo
            </button>{' '}
            <span class="muted">({clock(undoLeft)} left)</span>
          </p>
        )}
      </aside>
    </section>
  );
}

/** Every key of the queue, in one list; `?` opens it and Esc or `?` closes it. */
function KeyHelp({
  keyed,
  confirm,
  blur,
  onClose,
}: {
  keyed: Array<{ key: string; text: string }>;
  confirm: boolean;
  blur: boolean;
  onClose: () => void;
}) {
  const close = useRef<HTMLButtonElement>(null);
  useEffect(() => {
    const before = document.activeElement;
    close.current?.focus();
    return () => {
      if (before instanceof HTMLElement) before.focus();
    };
  }, []);
  const rows: Array<[string, string]> = [
    ...keyed.map((k): [string, string] => [
      k.key,
      k.text === 'abstain' ? 'abstain: you cannot tell' : `verdict “${k.text}”`,
    ]),
    ['Enter', confirm ? 'confirm the chosen verdict' : 'confirm (only with “Confirm each verdict with Enter” on)'],
    ['Esc', 'leave the note; drop a chosen verdict before it is confirmed; close this list'],
    ['u', 'undo your last verdict: its item comes back to you to decide again'],
    ['n', 'write a note with the verdict'],
    ['e', 'mark the item urgent: type a short reason, leave the field, then press the verdict key'],
    ['h', 'hand the item back to the queue for another reviewer'],
    ['s', 'skip the item: it goes to another reviewer and is not shown to you again in this session'],
    [
      'r',
      blur
        ? 'reveal the blurred text, or blur it again'
        : 'reveal the text (when “Blur each text until I reveal it” is on)',
    ],
    ['?', 'show or hide this list'],
  ];
  return (
    <div class="key-help" role="dialog" aria-modal="true" aria-labelledby="key-help-title">
      <div class="key-help-box">
        <h2 id="key-help-title">Every key of the queue</h2>
        <p class="muted">The keys work wherever the focus is, except while you type in the note.</p>
        <dl>
          {rows.map(([k, what]) => (
            <>
              <dt>
                <kbd>{k}</kbd>
              </dt>
              <dd>{what}</dd>
            </>
          ))}
        </dl>
        <button type="button" ref={close} onClick={onClose}>
          Close
        </button>
      </div>
    </div>
  );
}

/**
 * The reviewer's own protections, kept per account by the server: a blur over each text until it is revealed
 * (`r`), and a reminder to take a break after a set time on the queue.
 */
function Wellbeing({ prefs, onChange }: { prefs: Preferences; onChange: (p: Preferences) => void }) {
  const [minutes, setMinutes] = useState(prefs.breakReminderMinutes === null ? '' : String(prefs.breakReminderMinutes));
  const [problem, setProblem] = useState<string | null>(null);
  const saveMinutes = () => {
    const text = minutes.trim();
    if (text === '') {
      setProblem(null);
      if (prefs.breakReminderMinutes !== null) onChange({ ...prefs, breakReminderMinutes: null });
      return;
    }
    const n = Number(text);
    if (!Number.isInteger(n) || n < 5 || n > 480) {
      setProblem('A break reminder needs a whole number of minutes from 5 to 480, or nothing for no reminder.');
      return;
    }
    setProblem(null);
    if (n !== prefs.breakReminderMinutes) onChange({ ...prefs, breakReminderMinutes: n });
  };
  return (
    <details class="wellbeing">
      <summary>Your protections</summary>
      <label class="check">
        <input
          type="checkbox"
          checked={prefs.blurText}
          onChange={(e) => onChange({ ...prefs, blurText: e.currentTarget.checked })}
        />{' '}
        Blur each text until I reveal it (<kbd>r</kbd>)
      </label>
      <label>
        Remind me to take a break after this many minutes (5 to 480; empty: never)
        <input
          type="number"
          min="5"
          max="480"
          step="1"
          inputMode="numeric"
          value={minutes}
          onInput={(e) => setMinutes(e.currentTarget.value)}
          onBlur={saveMinutes}
          onKeyDown={(e) => {
            if (e.key === 'Enter') {
              e.preventDefault();
              saveMinutes();
              e.currentTarget.blur();
            }
          }}
        />
      </label>
      {problem && (
        <p class="error" role="alert">
          {problem}
        </p>
      )}
      <p class="muted">Kept with your account, on every browser you sign in from.</p>
    </details>
  );
}

function emptyReason(p: Progress | null): string {
  if (!p) return 'The queue gave no item.';
  if (p.items.total === 0) return 'This desk has no items yet: it is waiting for a supervisor to import texts.';
  if (p.items.open === 0 && p.items.leased === 0)
    return `Every one of the ${p.items.total} items on this desk has a verdict. New items appear here once a supervisor imports more.`;
  if (p.items.open === 0)
    return `The remaining ${p.items.leased} items are with other reviewers right now. This screen looks again every 15 seconds.`;
  return 'No item could be handed to you just now (items you skipped in this session are not shown to you again). This screen looks again every 15 seconds.';
}
