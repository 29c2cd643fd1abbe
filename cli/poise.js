#!/usr/bin/env node
'use strict';
require('../bin/poise.js');
