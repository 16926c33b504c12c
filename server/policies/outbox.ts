/**
 * The Outbox shows mail caught by the local fake SMTP server. It exists only on a
 * developer's or tester's own machine (the fake is on); with a real SMTP host it is gone.
 */
export const outboxPolicy = {
  read: (outboxEnabled: boolean) => outboxEnabled,
};
