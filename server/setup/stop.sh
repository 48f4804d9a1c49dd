#!/usr/bin/env bash
# `npm run stop`: stops the project-local PostgreSQL cluster and fake SMTP server.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
step "Stopping local services"
stop_local_services
