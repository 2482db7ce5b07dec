console.log('isoledger');
