DROP INDEX reviews_created_by_idx;
DROP INDEX audit_actor_action_idx;
DROP TABLE quotas;
