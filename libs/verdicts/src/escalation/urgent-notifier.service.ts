import { Inject, Injectable, Module } from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '#config';
import type { NotifyUrgentPayload } from '#queues';

/** How long the receiver has to answer one delivery. */
const DELIVERY_TIMEOUT_MS = 10_000;

/** Raised when the receiver did not take a delivery; the queue retries it. */
export class WebhookDeliveryError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'WebhookDeliveryError';
  }
}

/**
 * Announces an urgent escalation to `URGENT_WEBHOOK_URL`: a POST whose JSON
 * body holds ids and the time only, never a text or a reason (the receiver
 * reads more through the API, with its own credentials). Any answer but 2xx,
 * or none within 10 s, throws, and the queue tries again.
 */
@Injectable()
export class UrgentNotifier {
  constructor(@Inject(APP_CONFIG) private readonly config: AppConfig) {}

  async deliver(p: NotifyUrgentPayload): Promise<{ delivered: boolean; status?: number }> {
    const url = this.config.urgentWebhookUrl;
    if (url === null) return { delivered: false };
    const body = {
      event: 'urgent',
      escalationId: p.escalationId,
      deskId: p.deskId,
      itemId: p.itemId,
      verdictId: p.verdictId,
      raisedAt: p.raisedAt,
    };
    let res: Response;
    try {
      res = await fetch(url, {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify(body),
        signal: AbortSignal.timeout(DELIVERY_TIMEOUT_MS),
      });
    } catch (e) {
      throw new WebhookDeliveryError(`urgent webhook unreachable: ${(e as Error).message}`);
    }
    // The answer's body is not needed; read it so the connection is freed.
    await res.arrayBuffer().catch(() => undefined);
    if (!res.ok) throw new WebhookDeliveryError(`urgent webhook answered ${res.status}`);
    return { delivered: true, status: res.status };
  }
}

/** The worker side of escalations: delivering the webhook announcements. */
@Module({ providers: [UrgentNotifier], exports: [UrgentNotifier] })
export class EscalationWorkModule {}
